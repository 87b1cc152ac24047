using Driftline.Core.Detectors;

namespace Driftline.Core.Tests.Detectors;

/// <summary>
/// The contract for detectors on the loss stream: in control, the per-label log-loss of a
/// calibrated model (p ~ Beta(2, 5)); after the change, the same loss raised by 0.5 nats.
/// </summary>
public abstract class LossDetectorContractTests : DetectorContractTests
{
    /// <summary>Rise of the mean loss at the change, in nats.</summary>
    protected const double Shift = 0.5;

    private protected override DetectorState AddInControl(IChangeDetector detector, Random random) =>
        ((ChangeDetector)detector).Add(TestStreams.CalibratedLoss(random));

    private protected override DetectorState AddAfterChange(IChangeDetector detector, Random random) =>
        ((ChangeDetector)detector).Add(TestStreams.CalibratedLoss(random) + Shift);

    private protected override DetectorState AddRaw(IChangeDetector detector, double value) =>
        ((ChangeDetector)detector).Add(value);
}
