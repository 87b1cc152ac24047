using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

public sealed class TimeWindowTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 4, 18, 0, 0, TimeSpan.Zero);

    [Fact]
    public void Latest_BeforeAnything_IsNull()
    {
        var window = new TimeWindow(TimeSpan.FromMinutes(5), 100);

        Assert.Null(window.Latest);
        Assert.Equal(0, window.Count);
        Assert.Equal(10, window.Bins);
    }

    [Theory]
    [InlineData(0, 10, 10, "span")]
    [InlineData(-1, 10, 10, "span")]
    [InlineData(60, 0, 10, "maxCount")]
    [InlineData(60, 10, 0, "bins")]
    public void Constructor_OutOfRange_Throws(int seconds, int maxCount, int bins, string parameter)
    {
        var e = Assert.Throws<ArgumentOutOfRangeException>(() => new TimeWindow(TimeSpan.FromSeconds(seconds), maxCount, bins));

        Assert.Equal(parameter, e.ParamName);
    }

    [Fact]
    public void Add_LaterTime_EvictsEverythingAtOrBeforeLatestMinusSpan()
    {
        var window = new TimeWindow(TimeSpan.FromSeconds(10), 100);
        window.Add(T0, 0.9, 0);
        window.Add(T0.AddSeconds(5), 0.2, 0);

        window.Add(T0.AddSeconds(10), 0.7, 1); // T0 is exactly 10 s before: out, the window is (now − 10 s, now]

        Assert.Equal(
            [new TimedPrediction(T0.AddSeconds(5), 0.2, 0), new TimedPrediction(T0.AddSeconds(10), 0.7, 1)],
            window.ToArray());
        Assert.Equal(0.065, window.Current.Brier, 1e-15); // ((0.2)² + (0.3)²) / 2
    }

    [Fact]
    public void Add_OutOfOrderInsideSpan_IsHeldAndLeavesByItsOwnTime()
    {
        var window = new TimeWindow(TimeSpan.FromSeconds(10), 100);
        window.Add(T0.AddSeconds(100), 0.6, 1);

        Assert.True(window.Add(T0.AddSeconds(95), 0.3, 0));  // late, but inside (90, 100]
        Assert.False(window.Add(T0.AddSeconds(90), 0.3, 0)); // already out
        Assert.Equal(T0.AddSeconds(100), window.Latest);

        window.AdvanceTo(T0.AddSeconds(105));

        Assert.Equal([new TimedPrediction(T0.AddSeconds(100), 0.6, 1)], window.ToArray());
    }

    [Fact]
    public void AdvanceTo_EarlierTime_IsIgnored()
    {
        var window = new TimeWindow(TimeSpan.FromSeconds(10), 100);
        window.Add(T0, 0.4, 1);

        window.AdvanceTo(T0.AddSeconds(-30));

        Assert.Equal(T0, window.Latest);
        Assert.Equal(1, window.Count);
    }

    [Fact]
    public void AdvanceTo_QuietLabelStream_AgesEverythingOut()
    {
        var window = new TimeWindow(TimeSpan.FromMinutes(1), 100);
        window.Add(T0, 0.4, 1);
        window.Add(T0.AddSeconds(30), 0.6, 1);

        window.AdvanceTo(T0.AddMinutes(5));

        Assert.False(window.Current.IsReady);
        Assert.Equal(CalibrationSnapshot.Empty, window.Current);
    }

    [Fact]
    public void Add_FullOfNewer_EvictsOldestByTimeAndRefusesOlderNewcomer()
    {
        var window = new TimeWindow(TimeSpan.FromHours(1), 2);
        window.Add(T0.AddSeconds(20), 0.2, 0);
        window.Add(T0.AddSeconds(10), 0.1, 0);

        Assert.False(window.Add(T0.AddSeconds(5), 0.5, 1));  // older than everything held
        Assert.True(window.Add(T0.AddSeconds(15), 0.15, 1)); // evicts the one at +10 s

        Assert.Equal(
            [new TimedPrediction(T0.AddSeconds(15), 0.15, 1), new TimedPrediction(T0.AddSeconds(20), 0.2, 0)],
            window.ToArray());
    }

    [Fact]
    public void Add_EqualTimes_LeaveFirstInFirstOut()
    {
        var window = new TimeWindow(TimeSpan.FromHours(1), 2);
        window.Add(T0, 0.1, 0);
        window.Add(T0, 0.2, 0);

        window.Add(T0, 0.3, 1);

        Assert.Equal([new TimedPrediction(T0, 0.2, 0), new TimedPrediction(T0, 0.3, 1)], window.ToArray());
    }

    [Fact]
    public void Add_TimeWithOffset_ComparedAsInstant()
    {
        var window = new TimeWindow(TimeSpan.FromMinutes(10), 10);
        window.Add(new DateTimeOffset(2026, 3, 4, 20, 0, 0, TimeSpan.FromHours(2)), 0.5, 1); // 18:00 UTC

        Assert.Equal(T0, window.Latest);
        Assert.Equal(TimeSpan.Zero, window.Latest!.Value.Offset);
        Assert.False(window.Add(T0.AddMinutes(-10), 0.5, 1));
    }

    [Fact]
    public void Add_InvalidPrediction_DoesNotMoveLatest()
    {
        var window = new TimeWindow(TimeSpan.FromMinutes(1), 10);
        window.Add(T0, 0.5, 1);

        Assert.Throws<ArgumentOutOfRangeException>(() => window.Add(T0.AddHours(1), double.NaN, 1));

        Assert.Equal(T0, window.Latest);
        Assert.Equal(1, window.Count);
    }

    [Fact]
    public void Restore_SavedWindow_BehavesIdentically()
    {
        var window = new TimeWindow(TimeSpan.FromSeconds(30), 3, bins: 5);
        window.Add(T0.AddSeconds(10), 0.3, 1);
        window.Add(T0, 0.8, 0);
        window.AdvanceTo(T0.AddSeconds(25));

        TimeWindow restored = TimeWindow.Restore(window.Span, window.MaxCount, window.Bins, window.Latest, window.ToArray());
        window.Add(T0.AddSeconds(31), 0.6, 1);
        restored.Add(T0.AddSeconds(31), 0.6, 1);

        Assert.Equal(window.Latest, restored.Latest);
        Assert.Equal(window.ToArray(), restored.ToArray());
        Assert.Equal(window.Current, restored.Current);
    }

    [Fact]
    public void Restore_Empty_WithOrWithoutLatest()
    {
        Assert.Null(TimeWindow.Restore(TimeSpan.FromSeconds(1), 1, 10, null, []).Latest);
        Assert.Equal(T0, TimeWindow.Restore(TimeSpan.FromSeconds(1), 1, 10, T0, []).Latest);
    }

    [Fact]
    public void Restore_BadContents_ThrowsNamingWhich()
    {
        TimedPrediction a = new(T0, 0.1, 0), b = new(T0.AddSeconds(1), 0.2, 1);
        TimeSpan span = TimeSpan.FromSeconds(10);

        Assert.Equal("contents", Assert.Throws<ArgumentException>(() => TimeWindow.Restore(span, 1, 10, b.Time, [a, b])).ParamName);
        Assert.Equal("contents", Assert.Throws<ArgumentException>(() => TimeWindow.Restore(span, 5, 10, b.Time, [b, a])).ParamName);
        Assert.Equal("contents", Assert.Throws<ArgumentException>(() => TimeWindow.Restore(span, 5, 10, T0.AddMinutes(1), [a])).ParamName);
        Assert.Equal("contents", Assert.Throws<ArgumentException>(() => TimeWindow.Restore(span, 5, 10, T0, [b])).ParamName);
        Assert.Equal("latest", Assert.Throws<ArgumentException>(() => TimeWindow.Restore(span, 5, 10, null, [a])).ParamName);
    }

    [Fact]
    public void Add_Steady_DoesNotAllocate()
    {
        var window = new TimeWindow(TimeSpan.FromSeconds(50), 64);
        var bins = new ReliabilityBin[10];
        for (int i = 0; i < 200; i++)
        {
            window.Add(T0.AddSeconds(i), i % 11 / 10.0, i % 2);
        }

        _ = window.Current;
        window.CopyBins(bins);
        long before = GC.GetAllocatedBytesForCurrentThread();
        for (int i = 200; i < 10_200; i++)
        {
            // Every third one late, some beyond the span, and bursts past MaxCount.
            window.Add(T0.AddSeconds(i / 3 - (i % 3 == 0 ? 40 : 0)), i % 101 / 100.0, i % 3 == 0 ? 1 : 0);
            _ = window.Current;
            window.CopyBins(bins);
        }

        Assert.Equal(0, GC.GetAllocatedBytesForCurrentThread() - before);
    }
}
