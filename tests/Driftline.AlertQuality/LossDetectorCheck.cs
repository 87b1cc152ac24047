using Driftline.Core.Detectors;
using Driftline.Core.Metrics;

namespace Driftline.AlertQuality;

/// <summary>
/// Page–Hinkley and ADWIN, with their defaults, on the per-label log-loss of the same streams:
/// how often they fire on calibrated labels, and whether they see the calibration breaks at all.
/// </summary>
internal static class LossDetectorCheck
{
    private const int WarmUp = 2_000;

    /// <summary>Runs and prints the table for <paramref name="claimed"/>.</summary>
    public static void Run(ClaimedProbabilities claimed, BreakScenario[] scenarios, long labels, int replicates, int seed, double arl0)
    {
        Console.WriteLine("| loss detector | false alarms per million calibrated labels | " +
            string.Join(" | ", scenarios.Select(s => $"{s.Name}: detected within 20·n_min, median delay")) + " |");
        Console.WriteLine("| --- | --- |" + string.Concat(scenarios.Select(_ => " --- |")));
        foreach ((string name, Func<ChangeDetector> create) in new (string, Func<ChangeDetector>)[]
        {
            ("Page-Hinkley (δ 0.05, λ 50)", () => new PageHinkleyDetector()),
            ("ADWIN (δ 0.002, M 5)", () => new AdwinDetector()),
        })
        {
            var random = new Random(seed);
            ChangeDetector quiet = create();
            for (long i = 0; i < labels; i++)
            {
                double p = claimed.Sample(random);
                quiet.Add(PredictionScores.LogLoss(p, random.NextDouble() < p ? 1 : 0));
            }

            var cells = new List<string>();
            foreach (BreakScenario scenario in scenarios)
            {
                long limit = (long)(20 * Math.Log(arl0) / claimed.MeanKl(scenario));
                var delays = new List<long>();
                for (int r = 0; r < replicates; r++)
                {
                    ChangeDetector detector = create();
                    for (int i = 0; i < WarmUp; i++)
                    {
                        double p = claimed.Sample(random);
                        detector.Add(PredictionScores.LogLoss(p, random.NextDouble() < p ? 1 : 0));
                    }

                    long before = detector.Detections;
                    for (long delay = 1; delay <= limit; delay++)
                    {
                        double p = claimed.Sample(random);
                        detector.Add(PredictionScores.LogLoss(p, random.NextDouble() < ClaimedProbabilities.Truth(p, scenario) ? 1 : 0));
                        if (detector.Detections > before)
                        {
                            delays.Add(delay);
                            break;
                        }
                    }
                }

                cells.Add(FormattableString.Invariant($"{100.0 * delays.Count / replicates:F0}%, {Summary.Of(delays).Median:F0}"));
            }

            Console.WriteLine(FormattableString.Invariant($"| {name} | {quiet.Detections * 1e6 / labels:F1} | {string.Join(" | ", cells)} |"));
        }

        Console.WriteLine();
    }
}
