using Driftline.Core.Detectors;
using Xunit;

namespace Driftline.Core.Tests.Detectors;

public sealed class AdwinDetectorTests
{
    [Fact]
    public void Add_LongStationaryStream_KeepsLogarithmicMemoryAndTheExactWindowMean()
    {
        var detector = new AdwinDetector();
        var random = new Random(31);
        var values = new List<double>();
        for (int i = 0; i < 100_000; i++)
        {
            double value = TestStreams.CalibratedLoss(random);
            values.Add(value);
            detector.Add(value);
        }

        // Bifet & Gavaldà (2007), ADWIN2: at most M buckets of each size 2^i, so
        // M·(log2 W + 1) buckets for a window of W values.
        long width = detector.Width;
        Assert.True(detector.Buckets <= detector.BucketsPerLevel * (Math.Log2(width) + 1),
            $"{detector.Buckets} buckets for a window of {width}.");

        // The window is the last W values; its mean is their mean (pairwise merges, 1e-12 relative).
        double expected = values.Skip(values.Count - (int)width).Average();
        Assert.Equal(expected, detector.Mean, expected * 1e-12);
    }

    [Fact]
    public void Add_AfterAStep_DropsThePreChangeData()
    {
        var detector = new AdwinDetector();
        for (int i = 0; i < 10_000; i++)
        {
            detector.Add(i % 2);
        }

        Assert.Equal(10_000, detector.Width);
        int after = 0;
        while (detector.Detections == 0)
        {
            detector.Add(2 + (after % 2));
            after++;
        }

        // Means 0.5 and 2.5 with spread 0.5: found within a few dozen values, and most of the
        // old window is dropped at once.
        Assert.True(after < 100, $"took {after} values");
        Assert.True(detector.Width < 10_000 / 2, $"window kept {detector.Width} values");

        // A few old values can survive (a bucket of 8 is too small for the bound to condemn),
        // but after 1,000 more the window is essentially the new level.
        for (int i = 0; i < 1_000; i++)
        {
            detector.Add(2 + (i % 2));
        }

        Assert.InRange(detector.Width, 1_000, 1_000 + after + 32);
        Assert.Equal(2.5, detector.Mean, 0.05);
    }

    [Theory]
    [InlineData(0.0, 5, 30)]
    [InlineData(1.0, 5, 30)]
    [InlineData(0.002, 1, 30)]
    [InlineData(0.002, 5, 1)]
    public void Constructor_InvalidSetting_Throws(double delta, int buckets, int minCount)
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new AdwinDetector(delta, buckets, minCount));
    }
}
