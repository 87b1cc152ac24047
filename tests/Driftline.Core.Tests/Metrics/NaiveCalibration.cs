using Driftline.Core.Metrics;

namespace Driftline.Core.Tests.Metrics;

/// <summary>
/// From-scratch recomputation of the window measures in plain double arithmetic, written straight
/// from the definitions and sharing no code with the accumulators, to check them against.
/// </summary>
internal static class NaiveCalibration
{
    /// <summary>Metric values over <paramref name="items"/>, as CalibrationSnapshot defines them.</summary>
    public static CalibrationSnapshot Snapshot(ReadOnlySpan<GradedPrediction> items, int bins)
    {
        if (items.Length == 0)
        {
            return CalibrationSnapshot.Empty;
        }

        const double eps = 2.220446049250313e-16;
        double loss = 0, squared = 0, sumP = 0, sumY = 0;
        foreach (GradedPrediction g in items)
        {
            double p = Math.Min(Math.Max(g.P, eps), 1 - eps);
            loss -= g.Y * Math.Log(p) + (1 - g.Y) * Math.Log(1 - p);
            squared += (g.P - g.Y) * (g.P - g.Y);
            sumP += g.P;
            sumY += g.Y;
        }

        double n = items.Length;
        double ece = 0;
        foreach (ReliabilityBin b in Bins(items, bins))
        {
            if (b.Count > 0)
            {
                ece += b.Count / n * Math.Abs(b.MeanP - b.MeanY);
            }
        }

        return new CalibrationSnapshot(items.Length, loss / n, squared / n, ece, sumP / n, sumY / n, sumP / n - sumY / n);
    }

    /// <summary>Left-closed bins by counting the interior linspace edges at or below p (numpy searchsorted, side='right').</summary>
    public static ReliabilityBin[] Bins(ReadOnlySpan<GradedPrediction> items, int bins)
    {
        double[] edges = Linspace(bins);
        var count = new long[bins];
        var sumP = new double[bins];
        var sumY = new double[bins];
        foreach (GradedPrediction g in items)
        {
            int k = 0;
            for (int e = 1; e < bins; e++)
            {
                if (edges[e] <= g.P)
                {
                    k++;
                }
            }

            count[k]++;
            sumP[k] += g.P;
            sumY[k] += g.Y;
        }

        var result = new ReliabilityBin[bins];
        for (int k = 0; k < bins; k++)
        {
            result[k] = new ReliabilityBin(k, edges[k], edges[k + 1], count[k],
                count[k] == 0 ? double.NaN : sumP[k] / count[k],
                count[k] == 0 ? double.NaN : sumY[k] / count[k]);
        }

        return result;
    }

    /// <summary>numpy.linspace(0, 1, bins + 1): k · step with step = 1 / bins, last edge set to 1.</summary>
    public static double[] Linspace(int bins)
    {
        var edges = new double[bins + 1];
        double step = 1.0 / bins;
        for (int k = 0; k < bins; k++)
        {
            edges[k] = k * step;
        }

        edges[bins] = 1.0;
        return edges;
    }
}
