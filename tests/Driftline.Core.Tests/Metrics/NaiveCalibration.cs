using Driftline.Core.Metrics;

namespace Driftline.Core.Tests.Metrics;

/// <summary>
/// From-scratch recomputation of the window measures in plain double arithmetic, written straight
/// from the definitions and sharing no code with the accumulators, to check them against.
/// </summary>
internal static class NaiveCalibration
{
    /// <summary>Per-prediction terms, computed once so a test can re-sum many overlapping windows cheaply.</summary>
    public readonly record struct Term(double Loss, double Squared, int Bin);

    /// <summary>Log-loss term (sklearn eps='auto' clipping), squared error and left-closed bin of each prediction.</summary>
    public static Term[] Terms(ReadOnlySpan<GradedPrediction> items, int bins)
    {
        const double eps = 2.220446049250313e-16;
        double[] edges = Linspace(bins);
        var terms = new Term[items.Length];
        for (int i = 0; i < items.Length; i++)
        {
            GradedPrediction g = items[i];
            double p = Math.Min(Math.Max(g.P, eps), 1 - eps);
            // Left-closed bin: the number of interior edges at or below p (numpy searchsorted, side='right').
            int k = 0;
            for (int e = 1; e < bins; e++)
            {
                k += edges[e] <= g.P ? 1 : 0;
            }

            terms[i] = new Term(-(g.Y * Math.Log(p) + (1 - g.Y) * Math.Log(1 - p)), (g.P - g.Y) * (g.P - g.Y), k);
        }

        return terms;
    }

    /// <summary>Metric values over <paramref name="items"/>, as CalibrationSnapshot defines them.</summary>
    public static CalibrationSnapshot Snapshot(ReadOnlySpan<GradedPrediction> items, int bins) =>
        Snapshot(items, Terms(items, bins), bins);

    /// <summary>Metric values over <paramref name="items"/> with their precomputed <paramref name="terms"/>.</summary>
    public static CalibrationSnapshot Snapshot(ReadOnlySpan<GradedPrediction> items, ReadOnlySpan<Term> terms, int bins)
    {
        if (items.Length == 0)
        {
            return CalibrationSnapshot.Empty;
        }

        double loss = 0, squared = 0, sumP = 0, sumY = 0;
        for (int i = 0; i < items.Length; i++)
        {
            loss += terms[i].Loss;
            squared += terms[i].Squared;
            sumP += items[i].P;
            sumY += items[i].Y;
        }

        double n = items.Length;
        double ece = 0;
        foreach (ReliabilityBin b in Bins(items, terms, bins))
        {
            if (b.Count > 0)
            {
                ece += b.Count / n * Math.Abs(b.MeanP - b.MeanY);
            }
        }

        return new CalibrationSnapshot(items.Length, loss / n, squared / n, ece, sumP / n, sumY / n, sumP / n - sumY / n);
    }

    /// <summary>Left-closed reliability bins over <paramref name="items"/>.</summary>
    public static ReliabilityBin[] Bins(ReadOnlySpan<GradedPrediction> items, int bins) => Bins(items, Terms(items, bins), bins);

    /// <summary>Left-closed reliability bins over <paramref name="items"/> with their precomputed <paramref name="terms"/>.</summary>
    public static ReliabilityBin[] Bins(ReadOnlySpan<GradedPrediction> items, ReadOnlySpan<Term> terms, int bins)
    {
        double[] edges = Linspace(bins);
        var count = new long[bins];
        var sumP = new double[bins];
        var sumY = new double[bins];
        for (int i = 0; i < items.Length; i++)
        {
            int k = terms[i].Bin;
            count[k]++;
            sumP[k] += items[i].P;
            sumY[k] += items[i].Y;
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
