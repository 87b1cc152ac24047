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
        using var rig = new Rig("big");
        var (options, writer) = (rig.Options, rig.Writer);
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
    public void Write_CheckpointOverOneMegabyte_AllocatesAtMostItsLastChunk()
    {
        using var rig = new Rig("reuse");
        var (options, writer) = (rig.Options, rig.Writer);
        var checkpoint = Large(options.EventsTopic, partition: 3, names: 60_000);
        byte[] json = CheckpointStore.Serialize(checkpoint);
        writer.Write(checkpoint, json); // the first write makes the kept chunk buffer
        checkpoint.EventsOffset = 10;
        json = CheckpointStore.Serialize(checkpoint);

        long before = GC.GetAllocatedBytesForCurrentThread();
        writer.Write(checkpoint, json);
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        // Full chunks go through one kept buffer (librdkafka copies each value at produce time);
        // only the last, partial chunk is a new array. A bound of one chunk and 64 KiB for the
        // keys, tasks and manifest; a new array per chunk would be the whole payload again.
        Assert.True(json.Length > 3 * TopicCheckpointCodec.ChunkBytes, $"the test checkpoint is only {json.Length} bytes");
        Assert.True(allocated < TopicCheckpointCodec.ChunkBytes + 65_536, $"one {json.Length}-byte checkpoint write allocated {allocated} bytes");
        var assembler = TopicCheckpointReader.Read(options, writer, [3]);
        var manifest = assembler.Manifest(3)!;
        Assert.Equal(10, manifest.EventsOffset);
        Assert.Equal(json, assembler.Assemble(manifest));
    }

    [Fact]
    public void Write_SmallerAfterLarger_ReadsTheLatestAndDeletesTheLeftovers()
    {
        using var rig = new Rig("shrink");
        var (options, writer) = (rig.Options, rig.Writer);
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

    /// <summary>A mock cluster with a checkpoint topic, and a writer on the worker's producer settings.</summary>
    private sealed class Rig : IDisposable
    {
        private readonly MockCluster _cluster = new();
        private readonly IProducer<byte[]?, byte[]> _producer;

        public Rig(string prefix)
        {
            Options = WorkerHost.OptionsFor(_cluster.Bootstrap, prefix, "unused");
            Options.CheckpointTopic = prefix + "-checkpoints";
            // The mock makes a topic on its first record; the worker needs it to exist beforehand.
            Topics.Produce(_cluster.Bootstrap, Options.CheckpointTopic, [("unrelated", "{}", TestStream.StartMs)]);
            _producer = new ProducerBuilder<byte[]?, byte[]>(ClientSettings.Producer(Options)).Build();
            Writer = new TopicCheckpointWriter(_producer, Options.CheckpointTopic, MockCluster.Partitions);
        }

        public KafkaOptions Options { get; }

        public TopicCheckpointWriter Writer { get; }

        public void Dispose()
        {
            _producer.Dispose();
            _cluster.Dispose();
        }
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
