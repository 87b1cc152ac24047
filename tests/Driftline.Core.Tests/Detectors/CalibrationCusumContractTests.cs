using Driftline.Core.Detectors;

namespace Driftline.Core.Tests.Detectors;

/// <summary>
/// The contract for the calibration CUSUM: in control, y ~ Bernoulli(p) with p ~ Beta(2, 5);
/// after the change the true log-odds are 0.4 higher (the model under-predicts).
/// </summary>
public sealed class CalibrationCusumContractTests : DetectorContractTests
{
    // ARL₀ = 10⁶ bounds the expected false alarms in 200,000 labels by 0.2.
    protected override int MaxFalseAlarms => 1;

    // n_min = ln(10⁶)/KL = 13.8 / 0.0154 ≈ 900 labels for this shift and p distribution
    // (KL integrated exactly in tests/Driftline.AlertQuality); one seeded run may take about twice that.
    protected override int MaxDelay => 3_000;

    private protected override IChangeDetector Create() => new CalibrationCusumDetector();

    private protected override DetectorState AddInControl(IChangeDetector detector, Random random)
    {
        double p = TestStreams.Probability(random);
        return ((CalibrationCusumDetector)detector).Add(p, TestStreams.Outcome(random, p));
    }

    private protected override DetectorState AddAfterChange(IChangeDetector detector, Random random)
    {
        double p = TestStreams.Probability(random);
        return ((CalibrationCusumDetector)detector).Add(p, TestStreams.Outcome(random, TestStreams.Recalibrated(p, 0.4, 1)));
    }

    private protected override DetectorState AddRaw(IChangeDetector detector, double value) =>
        ((CalibrationCusumDetector)detector).Add(value, 1);

    private protected override double Fingerprint(IChangeDetector detector)
    {
        var cusum = (CalibrationCusumDetector)detector;
        var statistics = new double[cusum.Alternatives.Count];
        cusum.CopyStatistics(statistics);
        double sum = 0;
        for (int k = 0; k < statistics.Length; k++)
        {
            sum += statistics[k] * (k + 1);
        }

        return sum;
    }
}
