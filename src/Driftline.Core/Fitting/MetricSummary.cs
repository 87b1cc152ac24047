namespace Driftline.Core.Fitting;

/// <summary>One figure summarised over the folds of a repeated cross-validation.</summary>
/// <param name="Mean">Mean over every fold of every repetition.</param>
/// <param name="Sd">Sample standard deviation (n − 1) over those folds: the spread between held-out folds.</param>
/// <param name="SdOfRepeatMeans">
/// Sample standard deviation of the repetitions' means: how much the estimate itself moves with
/// the split; NaN with one repetition.
/// </param>
internal readonly record struct MetricSummary(double Mean, double Sd, double SdOfRepeatMeans)
{
    /// <summary>Summarises per-fold values ordered by repetition, then fold; NaN values are skipped.</summary>
    /// <param name="values">The figure of each fold.</param>
    /// <param name="repeats">The number of repetitions (the values split evenly among them).</param>
    public static MetricSummary Of(IReadOnlyList<double> values, int repeats)
    {
        ArgumentNullException.ThrowIfNull(values);
        ArgumentOutOfRangeException.ThrowIfLessThan(repeats, 1);
        int perRepeat = values.Count / repeats;
        var means = Enumerable.Range(0, repeats)
            .Select(r => MeanOf(values.Skip(r * perRepeat).Take(perRepeat).ToList()))
            .ToList();
        return new MetricSummary(MeanOf(values), SdOf(values), SdOf(means));
    }

    private static double MeanOf(IReadOnlyList<double> values)
    {
        var finite = values.Where(double.IsFinite).ToList();
        return finite.Count == 0 ? double.NaN : finite.Average();
    }

    private static double SdOf(IReadOnlyList<double> values)
    {
        var finite = values.Where(double.IsFinite).ToList();
        if (finite.Count < 2)
        {
            return double.NaN;
        }

        double mean = finite.Average();
        return Math.Sqrt(finite.Sum(v => (v - mean) * (v - mean)) / (finite.Count - 1));
    }
}
