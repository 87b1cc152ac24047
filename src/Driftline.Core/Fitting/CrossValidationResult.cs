namespace Driftline.Core.Fitting;

/// <summary>The held-out figures of a repeated stratified k-fold cross-validation.</summary>
/// <param name="Folds">Folds per repetition.</param>
/// <param name="Repeats">Repetitions.</param>
/// <param name="Seed">The seed the folds were drawn with.</param>
/// <param name="PerFold">Each fold, ordered by repetition, then fold.</param>
internal sealed record CrossValidationResult(int Folds, int Repeats, int Seed, IReadOnlyList<CrossValidationFold> PerFold)
{
    /// <summary>A model figure over the folds.</summary>
    public MetricSummary Model(Func<HeldOutScores, double> figure) =>
        MetricSummary.Of(PerFold.Select(f => figure(f.Model)).ToList(), Repeats);

    /// <summary>The class prior's figure over the folds.</summary>
    public MetricSummary Prior(Func<HeldOutScores, double> figure) =>
        MetricSummary.Of(PerFold.Select(f => figure(f.Prior)).ToList(), Repeats);

    /// <summary>
    /// Skill over the prior, 1 − model / prior, of the mean figure: 0 is no better than the
    /// class prior, 1 perfect; for losses (log-loss, Brier) where lower is better.
    /// </summary>
    public double Skill(Func<HeldOutScores, double> loss) => 1.0 - (Model(loss).Mean / Prior(loss).Mean);
}
