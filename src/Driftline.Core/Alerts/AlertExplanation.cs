using Driftline.Core.Metrics;

namespace Driftline.Core.Alerts;

/// <summary>
/// Why a window looks miscalibrated, in the terms a risk team uses: the direction of the
/// error overall, the calibration slope, and the reliability bins furthest off.
/// </summary>
/// <param name="MeanP">Mean predicted probability over the window.</param>
/// <param name="ObservedRate">Observed rate of positives over the window.</param>
/// <param name="Slope">Calibration slope (Cox 1958), NaN when it cannot be fitted.</param>
/// <param name="Intercept">Calibration intercept, NaN when it cannot be fitted.</param>
/// <param name="WorstBins">Up to three non-empty bins with the largest count-weighted gap, worst first.</param>
/// <param name="Segments">Up to three segments furthest off in standard errors (empty without <c>Monitor:SegmentBy</c>).</param>
internal sealed record AlertExplanation(double MeanP, double ObservedRate, double Slope, double Intercept, IReadOnlyList<ReliabilityBin> WorstBins,
    IReadOnlyList<Scoring.SegmentGap> Segments)
{
    /// <summary>Gap in mean p − observed rate that counts as "in line" in the words (0.01).</summary>
    public const double Tolerance = 0.01;

    /// <summary>Builds the explanation from a window's current contents (O(window): used only when an alert changes state).</summary>
    public static AlertExplanation Of(IGradedWindow window, IReadOnlyList<Scoring.SegmentGap>? segments = null)
    {
        ArgumentNullException.ThrowIfNull(window);
        var snapshot = window.Current;
        var bins = new ReliabilityBin[window.Bins];
        window.CopyBins(bins);
        var worst = bins.Where(b => b.Count > 0)
            .OrderByDescending(b => b.Count * Math.Abs(b.MeanP - b.MeanY))
            .Take(3)
            .ToArray();
        var fit = CalibrationSlope.Fit(window.Contents());
        return new AlertExplanation(snapshot.MeanP, snapshot.MeanY, fit.IsReady ? fit.Slope : double.NaN, fit.IsReady ? fit.Intercept : double.NaN, worst, segments ?? []);
    }

    /// <summary>The direction of the error in words: under- or over-predicting, and over- or under-confident.</summary>
    public string Direction()
    {
        var parts = new List<string>();
        double gap = MeanP - ObservedRate;
        if (gap < -Tolerance)
        {
            parts.Add("under-predicting (outcomes more frequent than predicted)");
        }
        else if (gap > Tolerance)
        {
            parts.Add("over-predicting (outcomes less frequent than predicted)");
        }
        if (double.IsFinite(Slope) && Slope < 0.8)
        {
            parts.Add($"over-confident (slope {Slope:0.00}: probabilities too extreme)");
        }
        else if (double.IsFinite(Slope) && Slope > 1.25)
        {
            parts.Add($"under-confident (slope {Slope:0.00}: probabilities too timid)");
        }
        return parts.Count == 0 ? "in line overall" : string.Join("; ", parts);
    }

    /// <summary>The worst bins in words, e.g. "0.3–0.4: predicted 0.35, observed 0.52 (n=210)".</summary>
    public string Bins() => string.Join("; ", WorstBins.Select(b =>
        $"{b.Lower:0.0#}–{b.Upper:0.0#}: predicted {b.MeanP:0.00}, observed {b.MeanY:0.00} (n={b.Count})"));

    /// <summary>The segments furthest off in words, e.g. "harbour: predicted 0.31, observed 0.45 (n=210)".</summary>
    public string SegmentsInWords() => string.Join("; ", Segments.Select(g =>
        $"{g.Segment}: predicted {g.MeanP:0.00}, observed {g.ObservedRate:0.00} (n={g.Count})"));
}
