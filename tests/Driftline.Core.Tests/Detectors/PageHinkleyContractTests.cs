using Driftline.Core.Detectors;

namespace Driftline.Core.Tests.Detectors;

public sealed class PageHinkleyContractTests : LossDetectorContractTests
{
    // Defaults δ = 0.05, λ = 50: λ / (Shift − δ) ≈ 111 values expected; 400 leaves room for noise.
    protected override int MaxFalseAlarms => 1;

    protected override int MaxDelay => 400;

    private protected override IChangeDetector Create() => new PageHinkleyDetector();

    private protected override double Fingerprint(IChangeDetector detector)
    {
        var ph = (PageHinkleyDetector)detector;
        return ph.Statistic + (1e3 * ph.Mean);
    }
}
