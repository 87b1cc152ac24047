using Driftline.Core.Detectors;
using Xunit;

namespace Driftline.Core.Tests.Detectors;

public sealed class PageHinkleyDetectorTests
{
    [Fact]
    public void Add_StepFromZeroToOne_SignalsOnTheHandComputedValue()
    {
        // δ = 0, λ = 2.5. Four zeros keep m at 0. Then ones: running means 1/5, 2/6, 3/7, 4/8
        // add 0.8, 0.667, 0.571, 0.5 to m: 0.8, 1.467, 2.038, 2.538; the eighth value passes 2.5.
        var detector = new PageHinkleyDetector(delta: 0, threshold: 2.5, minCount: 1);
        double[] values = [0, 0, 0, 0, 1, 1, 1];
        foreach (double value in values)
        {
            Assert.Equal(DetectorState.Stable, detector.Add(value));
        }

        Assert.Equal(0.8 + (2.0 / 3) + (4.0 / 7), detector.Statistic, 1e-12);
        Assert.Equal(DetectorState.Drift, detector.Add(1));
        Assert.Equal(1, detector.Detections);

        // The test restarts: the next value is measured against a fresh mean.
        Assert.Equal(0, detector.Statistic);
        Assert.Equal(DetectorState.Stable, detector.Add(1));
        Assert.Equal(1.0, detector.Mean);
    }

    [Fact]
    public void Add_FewerThanMinCount_IsNotReadyEvenOnAHugeJump()
    {
        var detector = new PageHinkleyDetector(delta: 0, threshold: 1, minCount: 3);

        Assert.Equal(DetectorState.NotReady, detector.Add(0));
        Assert.Equal(DetectorState.NotReady, detector.Add(100));
        Assert.Equal(DetectorState.Drift, detector.Add(100));
    }

    [Theory]
    [InlineData(-0.1, 50, 30)]
    [InlineData(double.NaN, 50, 30)]
    [InlineData(0.05, 0, 30)]
    [InlineData(0.05, double.PositiveInfinity, 30)]
    [InlineData(0.05, 50, 0)]
    public void Constructor_InvalidSetting_Throws(double delta, double threshold, int minCount)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new PageHinkleyDetector(delta, threshold, minCount));
    }
}
