using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class PartitionStateTests
{
    private static PartitionState State() => new(0, new ScoringEngine(new DriftlineOptions(), new NullSink()), checkpoint: null, hasLabels: true);

    private static BufferedRecord At(long offset, long timestampMs) => new(offset, timestampMs, null, []);

    [Fact]
    public void TryTakeNext_BothSidesQueued_TakesTheEarlierTimestampAndEventsOnATie()
    {
        var state = State();
        state.Events.Enqueue(At(0, 100));
        state.Events.Enqueue(At(1, 300));
        state.Labels.Enqueue(At(0, 100));
        state.Labels.Enqueue(At(1, 200));
        state.EventsAtEnd = state.LabelsAtEnd = true;
        var order = new List<(bool, long)>();
        while (state.TryTakeNext(0, 1_000, out var r, out bool fromLabels))
        {
            order.Add((fromLabels, r.Offset));
        }
        Assert.Equal([(false, 0L), (true, 0L), (true, 1L), (false, 1L)], order);
    }

    [Fact]
    public void TryTakeNext_OtherSideEmptyAndNotAtItsEnd_Waits()
    {
        var state = State();
        state.Events.Enqueue(At(0, 100));
        Assert.False(state.TryTakeNext(0, 1_000, out _, out _));
        state.LabelsAtEnd = true;
        Assert.True(state.TryTakeNext(0, 1_000, out _, out bool fromLabels));
        Assert.False(fromLabels);
    }

    [Fact]
    public void TryTakeNext_LabelWaitingAndEventsNotAtEnd_WaitsForTheEventThatMayComeFirst()
    {
        var state = State();
        state.Labels.Enqueue(At(0, 500));
        Assert.False(state.TryTakeNext(0, 1_000, out _, out _));
        state.Events.Enqueue(At(0, 400));
        Assert.True(state.TryTakeNext(0, 1_000, out _, out bool fromLabels));
        Assert.False(fromLabels);
    }

    [Fact]
    public void TryTakeNext_LabelLaterThanEveryEventSeen_WaitsForTheEventsSideOrTheHold()
    {
        var state = State();
        state.Events.Enqueue(At(0, 100));
        state.LabelsAtEnd = true;
        Assert.True(state.TryTakeNext(0, 1_000, out _, out _));
        state.EventsWatermarkMs = 100;
        state.EventsAtEnd = true;
        state.Labels.Enqueue(At(0, 50) with { QueuedAt = 5_000 });
        state.Labels.Enqueue(At(1, 900) with { QueuedAt = 5_000 });
        Assert.True(state.TryTakeNext(5_010, 1_000, out var early, out _));
        Assert.Equal(0, early.Offset); // at or before the watermark: its event has been seen
        Assert.False(state.TryTakeNext(5_999, 1_000, out _, out _)); // its event may still be on the way
        Assert.True(state.TryTakeNext(6_000, 1_000, out var late, out bool fromLabels));
        Assert.True(fromLabels);
        Assert.Equal(1, late.Offset);
    }

    [Fact]
    public void Dirty_AfterProgress_TrueUntilCheckpointed()
    {
        var state = State();
        Assert.False(state.Dirty);
        state.EventsNext = 10;
        Assert.True(state.Dirty);
        state.CheckpointedEvents = 10;
        Assert.False(state.Dirty);
    }
}
