using Driftline.Core.Fitting;
using Driftline.Core.Metrics;
using MathNet.Numerics.Distributions;

namespace Driftline.Core.Tests.Detectors;

/// <summary>Seeded synthetic streams shared by the detector tests.</summary>
internal static class TestStreams
{
    /// <summary>A claimed probability, Beta(2, 5): mean 0.29, most mass between 0.05 and 0.6.</summary>
    public static double Probability(Random random) => Beta.Sample(random, 2, 5);

    /// <summary>An outcome drawn with probability <paramref name="q"/> of 1.</summary>
    public static int Outcome(Random random, double q) => random.NextDouble() < q ? 1 : 0;

    /// <summary>The truth after a shift of the log-odds by <paramref name="shift"/> and a scaling by <paramref name="slope"/>.</summary>
    public static double Recalibrated(double p, double shift, double slope) =>
        LogisticMath.Probability(shift + (slope * Math.Log(p / (1 - p))));

    /// <summary>Per-label log-loss of a calibrated model: the in-control loss stream.</summary>
    public static double CalibratedLoss(Random random)
    {
        double p = Probability(random);
        return PredictionScores.LogLoss(p, Outcome(random, p));
    }
}
