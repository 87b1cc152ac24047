using Driftline.Kafka.Checkpoints;

namespace Driftline.Kafka.Tests.Support;

/// <summary>Reads back what a worker left in its checkpoint folder.</summary>
internal static class CheckpointFiles
{
    public static List<PartitionCheckpoint> All(string directory, string eventsTopic, int partitions = MockCluster.Partitions)
    {
        var store = new CheckpointStore(directory);
        return Enumerable.Range(0, partitions).Select(p => store.Read(eventsTopic, p)).OfType<PartitionCheckpoint>().ToList();
    }

    /// <summary>True when the checkpoints plus what the worker did since cover every event and label.</summary>
    public static bool Done(string directory, string eventsTopic, int events, Driftline.Kafka.Worker.WorkerStats stats)
    {
        // A resumed worker counts only its own work; the engines' counters cover both runs.
        return stats.Checkpoints > 0 && All(directory, eventsTopic).Sum(c => c.Snapshot.Counters.Labels) >= events && stats.Partitions == MockCluster.Partitions;
    }

    /// <summary>Asserts two runs left the same positions and the same engine state, partition by partition.</summary>
    public static void AssertSame(List<PartitionCheckpoint> expected, List<PartitionCheckpoint> actual)
    {
        Xunit.Assert.Equal(MockCluster.Partitions, actual.Count);
        Xunit.Assert.Equal(expected.Count, actual.Count);
        for (int p = 0; p < expected.Count; p++)
        {
            Xunit.Assert.Equal(expected[p].EventsOffset, actual[p].EventsOffset);
            Xunit.Assert.Equal(expected[p].LabelsOffset, actual[p].LabelsOffset);
            Xunit.Assert.Equal(SnapshotJson(expected[p]), SnapshotJson(actual[p]));
        }
    }

    public static string SnapshotJson(PartitionCheckpoint checkpoint)
    {
        using var stream = new MemoryStream();
        Driftline.Core.Snapshots.SnapshotCodec.Write(checkpoint.Snapshot, stream);
        return System.Text.Encoding.UTF8.GetString(stream.ToArray());
    }

    public static string Id(string json) => System.Text.Json.JsonDocument.Parse(json).RootElement.GetProperty("id").GetString()!;
}
