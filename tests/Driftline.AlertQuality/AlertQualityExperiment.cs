using System.Diagnostics;
using Driftline.Core.Detectors;

namespace Driftline.AlertQuality;

/// <summary>One distribution of claimed probabilities: calibrated streams, then each break.</summary>
internal static class AlertQualityExperiment
{
    private const int WarmUp = 2_000;
    private const int Streams = 10;
    private const double BreakLasts = 3;

    /// <summary>Runs and prints the table for <paramref name="claimed"/>.</summary>
    public static void Run(ClaimedProbabilities claimed, BreakScenario[] scenarios, long nullLabels, int replicates, int seed, double arl0)
    {
        var clock = Stopwatch.StartNew();
        var template = new CalibrationCusumDetector(arl0);
        Console.WriteLine(FormattableString.Invariant(
            $"## Claimed p ~ Beta({claimed.Alpha}, {claimed.Beta}); K = {template.Alternatives.Count} CUSUMs, h = ln(ARL0·K) = {template.Threshold:F3}, ARL0 = {arl0:0e0}, seed {seed}"));
        Console.WriteLine();

        // Calibrated streams: y ~ Bernoulli(p), in ten streams of equal length, each its own seed.
        long falseAlarms = 0;
        for (int s = 0; s < Streams; s++)
        {
            var random = new Random(seed + s);
            var detector = new CalibrationCusumDetector(arl0);
            for (long i = 0; i < nullLabels / Streams; i++)
            {
                double p = claimed.Sample(random);
                detector.Add(p, random.NextDouble() < p ? 1 : 0);
            }

            falseAlarms += detector.Detections;
        }

        long nullTotal = nullLabels / Streams * Streams;

        // The same count at a far lower ARL0, where alarms are frequent enough to count: the
        // observed rate should sit below the bound 1/ARL0 (Ville's inequality over K CUSUMs).
        const double LooseArl0 = 1e4;
        long looseLabels = Math.Min(nullTotal, 2_000_000);
        var looseRandom = new Random(seed + 500);
        var loose = new CalibrationCusumDetector(LooseArl0);
        for (long i = 0; i < looseLabels; i++)
        {
            double p = claimed.Sample(looseRandom);
            loose.Add(p, looseRandom.NextDouble() < p ? 1 : 0);
        }

        long looseAlarms = loose.Detections;
        Console.WriteLine(FormattableString.Invariant(
            $"Calibrated: {nullTotal:N0} labels in {Streams} streams, {falseAlarms} false alarms = {falseAlarms * 1e6 / nullTotal:F3} per million labels (target <= 1) [{clock.Elapsed.TotalSeconds:F1} s]"));
        Console.WriteLine(FormattableString.Invariant(
            $"Bound check at ARL0 = {LooseArl0:0e0}: {looseAlarms} alarms in {looseLabels:N0} calibrated labels = {looseAlarms * 1e6 / looseLabels:F0} per million (bound {1e6 / LooseArl0:F0})"));
        Console.WriteLine();
        Console.WriteLine("| break | KL/label | n_min | mean delay | median | p90 | mean/n_min | median/n_min | mean clear | median clear | warm-up alarms | clears during break | raised by (share, median clear) |");
        Console.WriteLine("| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |");
        for (int b = 0; b < scenarios.Length; b++)
        {
            RunBreak(claimed, scenarios[b], replicates, seed + 1_000 + b, arl0);
        }

        Console.WriteLine();
        Console.WriteLine(FormattableString.Invariant(
            $"{replicates} replicates per break after {WarmUp:N0} calibrated labels; * = extra break beyond the two targets. [{clock.Elapsed.TotalSeconds:F1} s]"));
        Console.WriteLine();
    }

    private static void RunBreak(ClaimedProbabilities claimed, BreakScenario scenario, int replicates, int seed, double arl0)
    {
        double kl = claimed.MeanKl(scenario);
        double nMin = Math.Log(arl0) / kl;
        long cap = (long)(50 * nMin);
        var delays = new List<long>(replicates);
        var clears = new List<long>(replicates);
        var raisedBy = new Dictionary<RecalibrationAlternative, List<long>>();
        int warmUpAlarms = 0;
        long flaps = 0;
        var random = new Random(seed);
        for (int r = 0; r < replicates; r++)
        {
            var detector = new CalibrationCusumDetector(arl0);
            for (int i = 0; i < WarmUp; i++)
            {
                double p = claimed.Sample(random);
                detector.Add(p, random.NextDouble() < p ? 1 : 0);
            }

            if (detector.Detections > 0)
            {
                warmUpAlarms++;
                continue;
            }

            // The break: the delay counts broken labels up to and including the one that raises.
            long delay = 0;
            while (!detector.IsRaised && delay < cap)
            {
                double p = claimed.Sample(random);
                detector.Add(p, random.NextDouble() < ClaimedProbabilities.Truth(p, scenario) ? 1 : 0);
                delay++;
            }

            delays.Add(delay);
            RecalibrationAlternative raiser = detector.RaisedBy ?? default;

            // The break lasts 3·n_min more labels (an alarm that clears in that time flaps), then
            // calibration returns; count labels until it clears.
            for (int i = 0; i < (int)(BreakLasts * nMin); i++)
            {
                double p = claimed.Sample(random);
                detector.Add(p, random.NextDouble() < ClaimedProbabilities.Truth(p, scenario) ? 1 : 0);
            }

            flaps += detector.Clears;

            long clear = 0;
            while (detector.IsRaised && clear < cap)
            {
                double p = claimed.Sample(random);
                detector.Add(p, random.NextDouble() < p ? 1 : 0);
                clear++;
            }

            clears.Add(clear);
            if (!raisedBy.TryGetValue(raiser, out List<long>? byRaiser))
            {
                raisedBy[raiser] = byRaiser = [];
            }

            byRaiser.Add(clear);
        }

        Summary d = Summary.Of(delays);
        Summary c = Summary.Of(clears);
        string raisers = string.Join("; ", raisedBy.OrderByDescending(pair => pair.Value.Count).Take(3).Select(pair =>
            FormattableString.Invariant($"{pair.Key.Describe()} {100.0 * pair.Value.Count / delays.Count:F0}% (clear {Summary.Of(pair.Value).Median:F0})")));
        Console.WriteLine(FormattableString.Invariant(
            $"| {scenario.Name}{(scenario.Required ? "" : " *")} | {kl:F5} | {nMin:F0} | {d.Mean:F0} | {d.Median:F0} | {d.P90:F0} | {d.Mean / nMin:F2} | {d.Median / nMin:F2} | {c.Mean:F0} | {c.Median:F0} | {warmUpAlarms} | {flaps} | {raisers} |"));
    }
}
