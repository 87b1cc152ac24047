namespace Driftline.Core.Metrics;

/// <summary>
/// A reliability diagram computed in one pass over stored predictions, with either rule for
/// probabilities that lie exactly on a bin edge.
/// </summary>
/// <remarks>
/// The windows bin left-closed; this exists for reports over a window's contents and to compare
/// with tools that bin right-closed, such as scikit-learn's <c>calibration_curve</c>.
/// </remarks>
internal static class ReliabilityCurve
{
    /// <summary>Bins the predictions into <paramref name="bins"/> equal-width bins over [0, 1].</summary>
    /// <param name="probabilities">Predicted probabilities, each in [0, 1].</param>
    /// <param name="labels">Outcomes, each 0 or 1, one per probability.</param>
    /// <param name="bins">Number of bins; at least 1, default 10.</param>
    /// <param name="rightClosed">
    /// False (default): bins are [e_k, e_{k+1}) with the last closed, as the windows bin. True:
    /// bins are (e_k, e_{k+1}] with the first closed, as scikit-learn's <c>calibration_curve</c>.
    /// </param>
    /// <returns>
    /// Every bin, in order, empty ones included with count 0 and NaN means (scikit-learn drops
    /// empty bins; filter on <see cref="ReliabilityBin.Count"/> to compare).
    /// </returns>
    /// <exception cref="ArgumentException">The spans differ in length.</exception>
    /// <exception cref="ArgumentOutOfRangeException">A value is not a probability or not 0/1, or <paramref name="bins"/> is less than 1.</exception>
    public static ReliabilityBin[] Compute(ReadOnlySpan<double> probabilities, ReadOnlySpan<int> labels, int bins = 10,
        bool rightClosed = false)
    {
        if (probabilities.Length != labels.Length)
        {
            throw new ArgumentException(
                $"Got {probabilities.Length} probabilities but {labels.Length} labels.", nameof(labels));
        }

        var edges = new BinEdges(bins);
        var count = new long[bins];
        var positives = new long[bins];
        // Fixed point for the same reason as the windows: a report over a window's contents then
        // shows exactly the means the window itself reports.
        var probability = new Int128[bins];
        for (int i = 0; i < probabilities.Length; i++)
        {
            double p = probabilities[i];
            int y = labels[i];
            PredictionScores.Validate(p, y);
            int k = rightClosed ? edges.RightClosedIndex(p) : edges.LeftClosedIndex(p);
            count[k]++;
            positives[k] += y;
            probability[k] += FixedPoint.FromDouble(p);
        }

        var result = new ReliabilityBin[bins];
        for (int k = 0; k < bins; k++)
        {
            long n = count[k];
            result[k] = n == 0
                ? new ReliabilityBin(k, edges.Lower(k), edges.Upper(k), 0, double.NaN, double.NaN)
                : new ReliabilityBin(k, edges.Lower(k), edges.Upper(k), n,
                    FixedPoint.ToDouble(probability[k]) / n, positives[k] / (double)n);
        }

        return result;
    }

    /// <summary>
    /// Expected calibration error of a set of bins, Σ (n_b / N) · |mean p_b − mean y_b| over
    /// non-empty bins (Naeini, Cooper &amp; Hauskrecht 2015; Guo et al. 2017).
    /// </summary>
    /// <returns>The error, or <see cref="double.NaN"/> when every bin is empty.</returns>
    public static double ExpectedCalibrationError(ReadOnlySpan<ReliabilityBin> bins)
    {
        long total = 0;
        double weighted = 0.0;
        foreach (ReliabilityBin bin in bins)
        {
            if (bin.Count > 0)
            {
                total += bin.Count;
                weighted += bin.Count * Math.Abs(bin.MeanP - bin.MeanY);
            }
        }

        return total == 0 ? double.NaN : weighted / total;
    }
}
