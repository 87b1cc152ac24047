using Confluent.Kafka;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Options;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class TopicCheckpointWriterTests
{
    [Fact]
    public void Write_CheckpointOverOneMegabyte_GoesInSeveralChunksAndReadsBack()
    {
        using var cluster = new MockCluster();
        var options = Options(cluster, "big");
        using var producer = new ProducerBuilder<byte[]?, byte[]>(ClientSettings.Producer(options)).Build();
        var writer = new TopicCheckpointWriter(producer, options.CheckpointTopic!, MockCluster.Partitions);
        var checkpoint = Large(options.EventsTopic, partition: 2, names: 60_000);
        byte[] json = CheckpointStore.Serialize(checkpoint);
        Assert.True(json.Length > 1_000_000, $"the test checkpoint is only {json.Length} bytes");

        writer.Write(checkpoint, json);

        var assembler = TopicCheckpointReader.Read(options, writer, [2]);
        var manifest = assembler.Manifest(2);
        Assert.NotNull(manifest);
        Assert.Equal((json.Length + TopicCheckpointCodec.ChunkBytes - 1) / TopicCheckpointCodec.ChunkBytes, manifest.Chunks);
        Assert.True(manifest.Chunks >= 2);
        Assert.Equal(json, assembler.Assemble(manifest));
    }

    [Fact]
    public void Write_SmallerAfterLarger_ReadsTheLatestAndDeletesTheLeftovers()
    {
        using var cluster = new MockCluster();
        var options = Options(cluster, "shrink");
        using var producer = new ProducerBuilder<byte[]?, byte[]>(ClientSettings.Producer(options)).Build();
        var writer = new TopicCheckpointWriter(producer, options.CheckpointTopic!, MockCluster.Partitions);
        var large = Large(options.EventsTopic, partition: 1, names: 40_000);
        var small = Large(options.EventsTopic, partition: 1, names: 10);

        foreach (var (checkpoint, offset) in new[] { (large, 100L), (small, 200L), (small, 300L) })
        {
            checkpoint.EventsOffset = offset;
            writer.Write(checkpoint, CheckpointStore.Serialize(checkpoint));
        }

        var assembler = TopicCheckpointReader.Read(options, writer, [1]);
        var manifest = assembler.Manifest(1)!;
        Assert.Equal(3, manifest.Generation);
        Assert.Equal(0, manifest.Slot);
        Assert.Equal(300, manifest.EventsOffset);
        Assert.Equal(1, manifest.Chunks);
        // Generation 1's higher chunks in slot 0 were deleted by tombstones.
        Assert.Equal(1, assembler.SlotExtent(1, writer.Id, 0));
        using var json = new MemoryStream(assembler.Assemble(manifest));
        Assert.Equal(300, CheckpointStore.Parse(json, "test").EventsOffset);
    }

    private static KafkaOptions Options(MockCluster cluster, string prefix)
    {
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, prefix, "unused");
        options.CheckpointTopic = prefix + "-checkpoints";
        // The mock makes a topic on its first record; the worker needs it to exist beforehand.
        Topics.Produce(cluster.Bootstrap, options.CheckpointTopic, [("unrelated", "{}", TestStream.StartMs)]);
        return options;
    }

    /// <summary>A checkpoint whose snapshot carries <paramref name="names"/> feature names (about 30 bytes each).</summary>
    private static PartitionCheckpoint Large(string eventsTopic, int partition, int names) => new()
    {
        EventsTopic = eventsTopic,
        Partition = partition,
        WrittenAt = DateTime.UtcNow,
        Snapshot = new()
        {
            FeatureNames = Enumerable.Range(0, names).ToDictionary(i => i.ToString("D7", System.Globalization.CultureInfo.InvariantCulture), i => $"courier=c-{i:D6}"),
        },
    };
}
