using MathNet.Numerics;

namespace Driftline.Core.Metrics;

/// <summary>
/// The Hosmer–Lemeshow goodness-of-fit test of probabilities against outcomes over risk groups:
/// Hosmer &amp; Lemeshow (1980), "Goodness of fit tests for the multiple logistic regression
/// model", Communications in Statistics – Theory and Methods 9, 1043–1069.
/// </summary>
/// <remarks>
/// <para>
/// Grouping (it changes the value, so it is fixed here): sort by p ascending with a stable sort
/// (equal p keep their order in the input, oldest first for a window's contents), then cut the
/// sorted list into g consecutive groups whose sizes differ by at most one, the larger groups
/// first (N = 944, g = 10: four of 95, six of 94). Equal probabilities on a group boundary are
/// not merged. This is the rule of <c>numpy.array_split</c> over a mergesort order.
/// </para>
/// <para>
/// Statistic Σ_g (O_g − E_g)² / (E_g·(1 − E_g/n_g)), the 2 × g chi-square form; p-value from the
/// chi-square distribution with g − 2 degrees of freedom, computed as the upper regularised
/// gamma function Q(df/2, HL/2) so small p-values keep their digits.
/// </para>
/// <para>
/// Cost: the sort makes this O(N log N) time and O(N) memory for N predictions, so compute it on
/// demand (a report, a periodic check) over a window's contents, never per label.
/// </para>
/// </remarks>
internal static class HosmerLemeshow
{
    /// <summary>The usual number of risk groups (deciles of risk).</summary>
    public const int DefaultGroups = 10;

    /// <summary>Runs the test over <paramref name="predictions"/>.</summary>
    /// <param name="predictions">Graded predictions in arrival order (for a window, <see cref="CalibrationWindow.ToArray"/>).</param>
    /// <param name="groups">Risk groups g; at least 3 (so df ≥ 1), default 10.</param>
    /// <returns>The test; not ready (NaN, no groups) when there are fewer predictions than groups.</returns>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="groups"/> is below 3, or a prediction is invalid.</exception>
    public static HosmerLemeshowResult Compute(ReadOnlySpan<GradedPrediction> predictions, int groups = DefaultGroups)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(groups, 3);
        int degrees = groups - 2;
        foreach (GradedPrediction prediction in predictions)
        {
            PredictionScores.Validate(prediction.P, prediction.Y);
        }

        int n = predictions.Length;
        if (n < groups)
        {
            return new HosmerLemeshowResult(double.NaN, degrees, double.NaN, []);
        }

        // Sorting positions with the position as tie-break is a stable sort by p.
        var order = new int[n];
        var keys = new double[n];
        for (int i = 0; i < n; i++)
        {
            order[i] = i;
            keys[i] = predictions[i].P;
        }

        Array.Sort(order, (a, b) =>
        {
            int byP = keys[a].CompareTo(keys[b]);
            return byP != 0 ? byP : a.CompareTo(b);
        });

        var table = new HosmerLemeshowGroup[groups];
        int smallSize = n / groups;
        int larger = n % groups;
        int start = 0;
        double statistic = 0;
        for (int g = 0; g < groups; g++)
        {
            int size = smallSize + (g < larger ? 1 : 0);
            int observed = 0;
            double expected = 0;
            for (int i = start; i < start + size; i++)
            {
                GradedPrediction prediction = predictions[order[i]];
                observed += prediction.Y;
                expected += prediction.P;
            }

            table[g] = new HosmerLemeshowGroup(size, observed, expected, predictions[order[start]].P, predictions[order[start + size - 1]].P);
            statistic += table[g].Term;
            start += size;
        }

        double pValue = double.IsPositiveInfinity(statistic) ? 0 : SpecialFunctions.GammaUpperRegularized(degrees / 2.0, statistic / 2.0);
        return new HosmerLemeshowResult(statistic, degrees, pValue, table);
    }
}
