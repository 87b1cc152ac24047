using System.Globalization;
using Driftline.AlertQuality;

// Measures the calibration CUSUM's alert quality on seeded synthetic streams (issue 5): false
// alarms on calibrated streams, detection delay against n_min = ln(ARL0)/KL after each break, and
// time to clear once calibration returns, for two distributions of claimed probabilities.
// Arguments: [calibrated labels per distribution] [replicates per break] [seed].
long nullLabels = args.Length > 0 ? long.Parse(args[0], CultureInfo.InvariantCulture) : 10_000_000;
int replicates = args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 1_000;
int seed = args.Length > 2 ? int.Parse(args[2], CultureInfo.InvariantCulture) : 2026;

BreakScenario[] scenarios =
[
    new("shift +0.4 (under-predicting)", 0.4, 1, Required: true),
    new("slope 0.5 (over-confident)", 0, 0.5, Required: true),
    new("shift -0.4 (over-predicting)", -0.4, 1, Required: false),
    new("shift +0.3", 0.3, 1, Required: false),
    new("slope 0.7", 0, 0.7, Required: false),
    new("slope 1.5 (under-confident)", 0, 1.5, Required: false),
];

// Beta(2, 5): a skewed risk score, mean 0.29. Beta(1, 1): uniform and symmetric about 0.5, where a
// slope break moves no mean and only the slope CUSUMs can see it.
AlertQualityExperiment.Run(new ClaimedProbabilities(2, 5), scenarios, nullLabels, replicates, seed, arl0: 1e6);
AlertQualityExperiment.Run(new ClaimedProbabilities(1, 1), scenarios, nullLabels, replicates, seed + 100, arl0: 1e6);

// For contrast: the loss-stream detectors on the same kind of streams (Beta(2, 5)), the two target breaks.
Console.WriteLine("## Loss detectors on the per-label log-loss, claimed p ~ Beta(2, 5)");
Console.WriteLine();
LossDetectorCheck.Run(new ClaimedProbabilities(2, 5), [.. scenarios.Where(s => s.Required)], labels: 2_000_000, replicates: 100, seed + 200, arl0: 1e6);
