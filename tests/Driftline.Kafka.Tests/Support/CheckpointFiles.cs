using Driftline.Kafka.Checkpoints;

namespace Driftline.Kafka.Tests.Support;

/// <summary>Reads back what a worker left in its checkpoint folder.</summary>
internal static class CheckpointFiles
{
    public static List<PartitionCheckpoint> All(string directory, string eventsTopic)
    {
        var store = new CheckpointStore(directory);
        return Enumerable.Range(0, MockCluster.Partitions).Select(p => store.Read(eventsTopic, p)).OfType<PartitionCheckpoint>().ToList();
    }

    public static string Id(string json) => System.Text.Json.JsonDocument.Parse(json).RootElement.GetProperty("id").GetString()!;
}
