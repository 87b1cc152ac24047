using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>
/// A checkpoint cut is the partition's state at the moment the loop decided it. Between the cut
/// and the snapshot the loop thread may still learn where a side of the partition ends (an end
/// of partition sets an unknown position without processing a record); that is not a move.
/// </summary>
public sealed class CheckpointCutTests
{
    [Fact]
    public void Take_EndOfPartitionSetTheUnknownPositionAfterTheCut_SnapshotAtTheCutsPositions()
    {
        var state = new PartitionState(3, new ScoringEngine(new DriftlineOptions(), new NullSink()), checkpoint: null, hasLabels: true)
        {
            EventsNext = 120,
        };
        var cut = new CheckpointCut(state, "cc-events", "cc-labels", DateTime.UnixEpoch);
        // What RecordIntake does on the loop thread for an end-of-partition on the labels side
        // that has not delivered a record yet: the engine is untouched.
        state.LabelsNext = 40;

        cut.Take();

        var checkpoint = cut.Wait();
        Assert.Equal(120, checkpoint.EventsOffset);
        Assert.Equal(PartitionState.Unknown, checkpoint.LabelsOffset);
    }

    [Fact]
    public void Take_ARecordWasProcessedAfterTheCut_Refused()
    {
        var state = new PartitionState(3, new ScoringEngine(new DriftlineOptions(), new NullSink()), checkpoint: null, hasLabels: true)
        {
            EventsNext = 120,
        };
        var cut = new CheckpointCut(state, "cc-events", "cc-labels", DateTime.UnixEpoch);
        state.EventsNext = 121;

        Assert.Throws<InvalidOperationException>(cut.Take);
        Assert.Throws<InvalidOperationException>(() => cut.Wait());
    }
}
