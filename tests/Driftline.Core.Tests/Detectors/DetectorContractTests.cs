using Driftline.Core.Detectors;
using Xunit;

namespace Driftline.Core.Tests.Detectors;

/// <summary>
/// What every change detector must do, rerun by one subclass per detector: stay quiet on a
/// stationary stream, find a change within a bounded delay, copy and reset exactly, and refuse
/// non-finite input without changing. Subclasses say what the detector reads (the in-control
/// and the after-change observation) and the bounds that fit its defaults.
/// </summary>
/// <remarks>
/// The members that name detector types are <c>private protected</c> because the detectors are
/// internal while xunit test classes must be public, so the suite cannot be generic over them.
/// Every stream comes from a seeded <see cref="Random"/>, so each run sees the same values.
/// </remarks>
public abstract class DetectorContractTests
{
    /// <summary>Values in the stationary run.</summary>
    protected virtual int QuietLength => 200_000;

    /// <summary>Most detections allowed on the stationary run.</summary>
    protected abstract int MaxFalseAlarms { get; }

    /// <summary>Most values after the change before it must be detected.</summary>
    protected abstract int MaxDelay { get; }

    /// <summary>In-control values before the change in the delay test.</summary>
    protected virtual int ValuesBeforeChange => 5_000;

    private protected abstract IChangeDetector Create();

    private protected abstract DetectorState AddInControl(IChangeDetector detector, Random random);

    private protected abstract DetectorState AddAfterChange(IChangeDetector detector, Random random);

    /// <summary>Feeds <paramref name="value"/> where the detector takes its number (the loss, or the probability).</summary>
    private protected abstract DetectorState AddRaw(IChangeDetector detector, double value);

    /// <summary>A number that summarises the detector's internal statistic, to compare two detectors.</summary>
    private protected abstract double Fingerprint(IChangeDetector detector);

    [Fact]
    public void State_NewDetector_IsNotReadyWithNothingCounted()
    {
        IChangeDetector detector = Create();

        Assert.Equal(DetectorState.NotReady, detector.State);
        Assert.Equal(0, detector.Count);
        Assert.Equal(0, detector.Detections);
    }

    [Fact]
    public void Add_StationaryStream_RaisesAtMostTheAllowedFalseAlarms()
    {
        IChangeDetector detector = Create();
        var random = new Random(20260301);
        for (int i = 0; i < QuietLength; i++)
        {
            AddInControl(detector, random);
        }

        Assert.Equal(QuietLength, detector.Count);
        Assert.True(detector.Detections <= MaxFalseAlarms,
            $"{detector.Detections} false alarms in {QuietLength} stationary values; at most {MaxFalseAlarms} allowed.");
    }

    [Fact]
    public void Add_UpwardShift_DetectedWithinBoundedDelay()
    {
        IChangeDetector detector = Create();
        var random = new Random(20260302);
        for (int i = 0; i < ValuesBeforeChange; i++)
        {
            AddInControl(detector, random);
        }

        long before = detector.Detections;
        int delay = 0;
        while (delay < MaxDelay * 4 && detector.Detections == before)
        {
            AddAfterChange(detector, random);
            delay++;
        }

        Assert.True(detector.Detections > before, $"No detection within {MaxDelay * 4} values after the change.");
        Assert.Equal(DetectorState.Drift, detector.State);
        Assert.True(delay <= MaxDelay, $"Detected {delay} values after the change; at most {MaxDelay} allowed.");
    }

    [Fact]
    public void Copy_MidStream_ContinuesIdenticallyAndIndependently()
    {
        IChangeDetector original = Create();
        var random = new Random(20260303);
        for (int i = 0; i < ValuesBeforeChange; i++)
        {
            AddInControl(original, random);
        }

        IChangeDetector copy = original.Copy();
        double fingerprintAtCopy = Fingerprint(copy);
        var first = new Random(7);
        var second = new Random(7);
        for (int i = 0; i < 4 * MaxDelay; i++)
        {
            DetectorState a = i % 4 == 0 ? AddInControl(original, first) : AddAfterChange(original, first);
            DetectorState b = i % 4 == 0 ? AddInControl(copy, second) : AddAfterChange(copy, second);
            Assert.Equal(a, b);
        }

        Assert.Equal(original.Count, copy.Count);
        Assert.Equal(original.Detections, copy.Detections);
        Assert.True(original.Detections > 0, "The continuation should include a change.");
        Assert.Equal(Fingerprint(original), Fingerprint(copy));

        // Independent: a copy taken now does not move when the original goes on.
        IChangeDetector frozen = original.Copy();
        double frozenFingerprint = Fingerprint(frozen);
        long frozenCount = frozen.Count;
        AddAfterChange(original, first);
        Assert.Equal(frozenCount, frozen.Count);
        Assert.Equal(frozenFingerprint, Fingerprint(frozen));
        Assert.False(double.IsNaN(fingerprintAtCopy));
    }

    [Fact]
    public void Reset_AfterDetection_BehavesExactlyAsNew()
    {
        IChangeDetector used = Create();
        var random = new Random(20260304);
        for (int i = 0; i < ValuesBeforeChange; i++)
        {
            AddInControl(used, random);
        }

        while (used.Detections == 0)
        {
            AddAfterChange(used, random);
        }

        used.Reset();
        Assert.Equal(DetectorState.NotReady, used.State);
        Assert.Equal(0, used.Count);
        Assert.Equal(0, used.Detections);

        IChangeDetector fresh = Create();
        var first = new Random(11);
        var second = new Random(11);
        for (int i = 0; i < ValuesBeforeChange + (2 * MaxDelay); i++)
        {
            bool changed = i >= ValuesBeforeChange;
            DetectorState a = changed ? AddAfterChange(used, first) : AddInControl(used, first);
            DetectorState b = changed ? AddAfterChange(fresh, second) : AddInControl(fresh, second);
            Assert.Equal(b, a);
        }

        Assert.Equal(fresh.Detections, used.Detections);
        Assert.Equal(Fingerprint(fresh), Fingerprint(used));
    }

    [Theory]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    [InlineData(double.NegativeInfinity)]
    public void Add_NonFinite_ThrowsAndLeavesDetectorUnchanged(double value)
    {
        IChangeDetector detector = Create();
        var random = new Random(20260305);
        for (int i = 0; i < 1_000; i++)
        {
            AddInControl(detector, random);
        }

        IChangeDetector before = detector.Copy();
        Assert.Throws<ArgumentOutOfRangeException>(() => AddRaw(detector, value));

        Assert.Equal(before.Count, detector.Count);
        Assert.Equal(before.State, detector.State);
        Assert.Equal(Fingerprint(before), Fingerprint(detector));
    }
}
