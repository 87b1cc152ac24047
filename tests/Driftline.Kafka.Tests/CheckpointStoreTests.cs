using System.Text.Json.Nodes;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class CheckpointStoreTests
{
    private static PartitionCheckpoint Checkpoint(int partition) => new()
    {
        EventsTopic = "cs-events",
        Partition = partition,
        EventsOffset = 10,
        LabelsOffset = 4,
        WrittenAt = DateTime.UtcNow,
        Snapshot = new ScoringEngine(new DriftlineOptions(), new NullSink()).Snapshot(),
    };

    [Fact]
    public void Write_AnotherWritersTemporaryFileBeside_IsLeftAloneAndTheCheckpointLandsWhole()
    {
        // Two workers sharing a folder (a takeover on a shared volume) may write the same
        // partition at once; one fixed temporary name lets one truncate or rename the other's
        // half-written file. Each process writes through NAME.PID.tmp, as the replay outputs do.
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var checkpoint = Checkpoint(3);
        string path = store.PathOf(checkpoint.EventsTopic, checkpoint.Partition);
        string other = path + ".tmp";
        File.WriteAllText(other, "another writer's checkpoint, half written");

        store.Write(checkpoint, CheckpointStore.Serialize(checkpoint));

        Assert.Equal("another writer's checkpoint, half written", File.ReadAllText(other));
        Assert.Equal(10, store.Read(checkpoint.EventsTopic, checkpoint.Partition)!.EventsOffset);
        Assert.DoesNotContain(Directory.GetFiles(dir.Path), f => f.EndsWith($".{Environment.ProcessId}.tmp", StringComparison.Ordinal));
    }

    [Fact]
    public void Read_SnapshotWithInvalidSettings_IsRefusedAtLoadNamingTheFile()
    {
        // A model file is checked by SnapshotValidator before use; a checkpoint carries the same
        // snapshot and must be checked the same way, not restored and failing on the first event.
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var checkpoint = Checkpoint(1);
        var json = JsonNode.Parse(CheckpointStore.Serialize(checkpoint))!;
        json["snapshot"]!["options"]!["model"] = null;
        File.WriteAllText(store.PathOf(checkpoint.EventsTopic, 1), json.ToJsonString());

        var ex = Assert.Throws<InvalidDataException>(() => store.Read(checkpoint.EventsTopic, 1));
        Assert.Contains(store.PathOf(checkpoint.EventsTopic, 1), ex.Message, StringComparison.Ordinal);
        Assert.Contains("model", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_SnapshotWithoutItsCounters_IsRefused()
    {
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var checkpoint = Checkpoint(2);
        var json = JsonNode.Parse(CheckpointStore.Serialize(checkpoint))!;
        json["snapshot"]!["counters"] = null;
        File.WriteAllText(store.PathOf(checkpoint.EventsTopic, 2), json.ToJsonString());

        var ex = Assert.Throws<InvalidDataException>(() => store.Read(checkpoint.EventsTopic, 2));
        Assert.Contains("counters", ex.Message, StringComparison.Ordinal);
    }
}
