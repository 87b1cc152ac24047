using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Xunit;

namespace Driftline.Core.Tests.Events;

public sealed class AlertWordsTests
{
    [Theory]
    [InlineData(true, 0.06, 0.06, "is 0.06, at the raise threshold 0.06")]
    [InlineData(true, 0.0712, 0.06, "is 0.0712, above the raise threshold 0.06")]
    [InlineData(true, 0.41, 0.5, "is 0.41, below the raise threshold 0.5")]
    [InlineData(false, 0.029, 0.03, "is back to 0.029, below the clear threshold 0.03")]
    [InlineData(false, 0.03, 0.03, "is back to 0.03, at the clear threshold 0.03")]
    [InlineData(false, 0.62, 0.55, "is back to 0.62, above the clear threshold 0.55")]
    public void Describe_ValueAgainstThreshold_SaysAtAboveOrBelow(bool raised, double value, double threshold, string expected)
    {
        var alert = new AlertTransition("calibration-gap", raised, AlertMetric.CalibrationGap, value, threshold, 1_000, "o-1", 0, 5_000);

        string words = RecordJson.Describe(alert);

        Assert.Contains(expected, words, StringComparison.Ordinal);
        Assert.DoesNotContain("past", words, StringComparison.Ordinal);
    }
}
