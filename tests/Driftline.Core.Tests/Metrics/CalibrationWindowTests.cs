using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

public sealed class CalibrationWindowTests
{
    [Fact]
    public void Constructor_Defaults_TenBins()
    {
        var window = new CalibrationWindow(3);

        Assert.Equal(3, window.Capacity);
        Assert.Equal(10, window.Bins);
        Assert.Equal(0, window.Count);
    }

    [Theory]
    [InlineData(0, 10, "capacity")]
    [InlineData(-1, 10, "capacity")]
    [InlineData(5, 0, "bins")]
    public void Constructor_NonPositiveSize_Throws(int capacity, int bins, string parameter)
    {
        var e = Assert.Throws<ArgumentOutOfRangeException>(() => new CalibrationWindow(capacity, bins));
        Assert.Equal(parameter, e.ParamName);
    }

    [Fact]
    public void Add_PastCapacity_EvictsOldestFirst()
    {
        var window = new CalibrationWindow(2);
        window.Add(0.9, 0);
        window.Add(0.2, 0);
        window.Add(0.7, 1);

        Assert.Equal([new GradedPrediction(0.2, 0), new GradedPrediction(0.7, 1)], window.ToArray());
        Assert.Equal(2, window.Count);
        Assert.True(window.IsFull);
        // Brier over the two held: ((0.2)^2 + (0.3)^2) / 2, worked by hand.
        Assert.Equal(0.065, window.Current.Brier, 1e-15);
        Assert.Equal(0.5, window.Current.MeanY);
    }

    [Theory]
    [InlineData(0.0, 0)]
    [InlineData(0.1, 1)]
    [InlineData(0.3, 2)]                 // 0.3 < 0.30000000000000004, the linspace edge
    [InlineData(0.30000000000000004, 3)]
    [InlineData(0.6, 5)]                 // 0.6 < 0.6000000000000001
    [InlineData(0.7, 6)]                 // 0.7 < 0.7000000000000001
    [InlineData(0.7000000000000001, 7)]
    [InlineData(0.8999999999999999, 8)]
    [InlineData(0.9, 9)]
    [InlineData(1.0, 9)]                 // the last bin is closed
    public void CopyBins_ProbabilityOnOrNearEdge_LandsInLeftClosedBin(double p, int expectedBin)
    {
        var window = new CalibrationWindow(1);
        window.Add(p, 1);
        var bins = new ReliabilityBin[10];

        window.CopyBins(bins);

        for (int k = 0; k < 10; k++)
        {
            Assert.Equal(k == expectedBin ? 1 : 0, bins[k].Count);
        }

        Assert.Equal(p, bins[expectedBin].MeanP);
    }

    [Fact]
    public void Current_OverPredicting_HasPositiveCalibrationInTheLarge()
    {
        var window = new CalibrationWindow(10);
        window.Add(0.8, 0);
        window.Add(0.6, 1);

        Assert.Equal(0.7 - 0.5, window.Current.CalibrationInTheLarge, 1e-15);
    }

    [Fact]
    public void Restore_MoreThanCapacity_Throws()
    {
        var e = Assert.Throws<ArgumentException>(() =>
            CalibrationWindow.Restore(1, 10, [new GradedPrediction(0.1, 0), new GradedPrediction(0.2, 1)]));

        Assert.Equal("contents", e.ParamName);
    }

    [Fact]
    public void Restore_InvalidSavedPrediction_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() =>
            CalibrationWindow.Restore(3, 10, [new GradedPrediction(double.NaN, 0)]));
    }

    [Fact]
    public void Clear_AfterAdds_EmptiesButKeepsShape()
    {
        var window = new CalibrationWindow(3, bins: 5);
        window.Add(0.4, 1);
        window.Add(0.6, 0);

        window.Clear();
        window.Add(0.25, 1);

        Assert.Equal([new GradedPrediction(0.25, 1)], window.ToArray());
        Assert.Equal(CalibrationWindow.Restore(3, 5, [new GradedPrediction(0.25, 1)]).Current, window.Current);
    }

    [Fact]
    public void Add_WhenFull_DoesNotAllocate()
    {
        var window = new CalibrationWindow(64);
        var bins = new ReliabilityBin[10];
        for (int i = 0; i < 200; i++)
        {
            window.Add(i % 11 / 10.0, i % 2);
        }

        _ = window.Current;
        window.CopyBins(bins);
        long before = GC.GetAllocatedBytesForCurrentThread();
        for (int i = 0; i < 10_000; i++)
        {
            window.Add(i % 101 / 100.0, i % 3 == 0 ? 1 : 0);
            _ = window.Current;
            window.CopyBins(bins);
        }

        Assert.Equal(0, GC.GetAllocatedBytesForCurrentThread() - before);
    }
}
