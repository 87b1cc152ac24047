namespace Driftline.Cli;

/// <summary><c>fit</c>'s cross-validation options as given on the command line.</summary>
/// <param name="Folds">Stratified folds per repetition; 0 is no cross-validation.</param>
/// <param name="Repeats">Repetitions, each with new folds.</param>
/// <param name="Seed">Seed of the folds' shuffle.</param>
/// <param name="RepeatsGiven">Whether <c>--repeats</c> was on the command line (it needs <c>--folds</c>).</param>
internal sealed record CrossValidationRequest(int Folds, int Repeats, int Seed, bool RepeatsGiven);
