using CsCheck;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>Random-input checks shared by the calibration property tests.</summary>
internal static class CalibrationProperties
{
    /// <summary>Tolerance against the plain-double recomputation.</summary>
    public const double Tolerance = 1e-9;

    /// <summary>
    /// Probabilities that favour the awkward cases: exact 0 and 1, the clipping bounds, the exact
    /// linspace edges of the bin count in use and the decimal values just below some of them.
    /// </summary>
    public static Gen<double> Probability(int bins) => Gen.Frequency(
        (6, Gen.Double[0.0, 1.0]),
        (2, Gen.Int[0, bins].Select(k => k == bins ? 1.0 : k * (1.0 / bins))),
        (2, Gen.OneOf(0.0, 1.0, 2.220446049250313e-16, 1 - 2.220446049250313e-16, 1e-300,
            0.3, 0.6, 0.7, 0.30000000000000004, 0.6000000000000001, 0.7000000000000001, 0.5)));

    /// <summary>A graded prediction with a label that is often, not always, the likelier one.</summary>
    public static Gen<GradedPrediction> Prediction(int bins) =>
        Gen.Select(Probability(bins), Gen.Double.Unit, (p, u) => new GradedPrediction(p, u < 0.5 * (p + 0.5) ? 1 : 0));

    /// <summary>Bin counts: mostly the default 10, sometimes anything from 1 to 25.</summary>
    public static Gen<int> Bins => Gen.Frequency((1, Gen.Const(10)), (1, Gen.Int[1, 25]));

    /// <summary>Fails unless every measure agrees with the recomputation to <see cref="Tolerance"/>.</summary>
    public static void AssertMatches(CalibrationSnapshot expected, CalibrationSnapshot actual, string where)
    {
        Assert.Equal(expected.Count, actual.Count);
        Close(expected.LogLoss, actual.LogLoss, where, "log-loss");
        Close(expected.Brier, actual.Brier, where, "Brier");
        Close(expected.Ece, actual.Ece, where, "ECE");
        Close(expected.MeanP, actual.MeanP, where, "mean p");
        Close(expected.MeanY, actual.MeanY, where, "mean y");
        Close(expected.CalibrationInTheLarge, actual.CalibrationInTheLarge, where, "calibration-in-the-large");
    }

    /// <summary>Fails unless counts agree exactly and means to <see cref="Tolerance"/>.</summary>
    public static void AssertMatches(ReliabilityBin[] expected, ReadOnlySpan<ReliabilityBin> actual, string where)
    {
        for (int k = 0; k < expected.Length; k++)
        {
            Assert.Equal(expected[k].Lower, actual[k].Lower);
            Assert.Equal(expected[k].Upper, actual[k].Upper);
            Assert.Equal(expected[k].Count, actual[k].Count);
            Close(expected[k].MeanP, actual[k].MeanP, where, $"bin {k} mean p");
            Close(expected[k].MeanY, actual[k].MeanY, where, $"bin {k} mean y");
        }
    }

    private static void Close(double expected, double actual, string where, string what)
    {
        bool ok = double.IsNaN(expected) ? double.IsNaN(actual) : Math.Abs(expected - actual) <= Tolerance;
        if (!ok)
        {
            throw new Xunit.Sdk.XunitException($"{where}: {what} expected {expected:R} (recomputed), got {actual:R}.");
        }
    }
}
