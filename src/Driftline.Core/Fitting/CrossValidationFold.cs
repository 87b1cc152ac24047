namespace Driftline.Core.Fitting;

/// <summary>One held-out fold of a cross-validation.</summary>
/// <param name="Repeat">The repetition, from 0.</param>
/// <param name="Fold">The fold within it, from 0.</param>
/// <param name="Count">Held-out rows.</param>
/// <param name="Model">The model fitted on the other folds, scored on this one.</param>
/// <param name="Prior">The class prior of the other folds, (n_k + 1) / (N + K), scored on this one.</param>
internal sealed record CrossValidationFold(int Repeat, int Fold, int Count, HeldOutScores Model, HeldOutScores Prior);
