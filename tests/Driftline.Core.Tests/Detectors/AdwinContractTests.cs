using Driftline.Core.Detectors;

namespace Driftline.Core.Tests.Detectors;

public sealed class AdwinContractTests : LossDetectorContractTests
{
    // Default δ = 0.002: the Bernstein bound needs a newer sub-window of roughly 100–200 values to
    // separate a 0.5-nat rise at this spread; bucket boundaries add up to half again.
    protected override int MaxFalseAlarms => 2;

    protected override int MaxDelay => 600;

    private protected override IChangeDetector Create() => new AdwinDetector();

    private protected override double Fingerprint(IChangeDetector detector)
    {
        var adwin = (AdwinDetector)detector;
        return adwin.Width + adwin.Mean;
    }
}
