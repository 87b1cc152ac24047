using Confluent.Kafka;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Options;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>
/// Two owners of one partition at once, each with a folder of its own, so nothing but the
/// checkpoint topic is shared (Kafka README, "Two owners of one partition"): whatever order
/// their records reach the topic in, a new owner restores the checkpoint that is ahead, by
/// events offset then labels offset (common practice: a checkpoint only moves forward).
/// </summary>
public sealed class TopicCheckpointFenceTests
{
    private const int Partition = 1;

    [Fact]
    public void Load_AnotherOwnersWriteLandsBetweenChunksAndManifest_RestoresTheOneAhead()
    {
        using var cluster = new MockCluster();
        var options = Options(cluster, "fence-mix");
        using var inner = Producer(options);
        using var other = Producer(options);
        var (gated, gate) = GatedProducer.Wrap(inner);
        Seed(options, other, eventsOffset: 100);
        using var dirA = new TempDir();
        using var dirB = new TempDir();
        var a = Owner(options, gated, dirA);
        var b = Owner(options, other, dirB);
        Assert.Equal(100, a.Loader.Load([Partition])[Partition]!.EventsOffset);
        Assert.Equal(100, b.Loader.Load([Partition])[Partition]!.EventsOffset);

        // The lagging owner's whole write goes out after the other's chunks, before its manifest.
        gate.BeforeManifest = () => Write(b, eventsOffset: 150, seed: 2);
        Write(a, eventsOffset: 200, seed: 1);

        Assert.Equal((200, 200), Restored(options, other));
    }

    [Fact]
    public void Load_ALaggingOwnerWritesLast_RestoresTheOneAhead()
    {
        using var cluster = new MockCluster();
        var options = Options(cluster, "fence-late");
        using var producer = Producer(options);
        Seed(options, producer, eventsOffset: 100);
        using var dirA = new TempDir();
        using var dirB = new TempDir();
        var a = Owner(options, producer, dirA);
        var b = Owner(options, producer, dirB);
        a.Loader.Load([Partition]);
        b.Loader.Load([Partition]);

        Write(a, eventsOffset: 200, seed: 1);
        Write(b, eventsOffset: 150, seed: 2);
        Write(a, eventsOffset: 300, seed: 3);
        Write(b, eventsOffset: 160, seed: 4);

        Assert.Equal((300, 300), Restored(options, producer));
    }

    private sealed record OwnerOf(TopicCheckpointWriter Writer, CheckpointLoader Loader, CheckpointStore Store);

    private static OwnerOf Owner(KafkaOptions options, IProducer<byte[]?, byte[]> producer, TempDir dir)
    {
        var writer = new TopicCheckpointWriter(producer, options.CheckpointTopic!, MockCluster.Partitions);
        var store = new CheckpointStore(dir.Path);
        return new(writer, new CheckpointLoader(options, store, writer), store);
    }

    /// <summary>Writes as the worker does: the file, then (when kept) the topic's copy.</summary>
    private static void Write(OwnerOf owner, long eventsOffset, int seed)
    {
        var checkpoint = Checkpoint(owner.Writer.Topic.Replace("-checkpoints", "-events", StringComparison.Ordinal), eventsOffset, seed);
        byte[] json = CheckpointStore.Serialize(checkpoint);
        Assert.Null(owner.Store.Write(checkpoint, json, () => owner.Writer.Write(checkpoint, json)));
    }

    /// <summary>The first owner's checkpoint, which both later owners restore.</summary>
    private static void Seed(KafkaOptions options, IProducer<byte[]?, byte[]> producer, long eventsOffset)
    {
        var checkpoint = Checkpoint(options.EventsTopic, eventsOffset, seed: 0);
        new TopicCheckpointWriter(producer, options.CheckpointTopic!, MockCluster.Partitions).Write(checkpoint, CheckpointStore.Serialize(checkpoint));
    }

    /// <summary>What a third worker, with an empty folder of its own, restores.</summary>
    private static (long EventsOffset, long LabelsOffset) Restored(KafkaOptions options, IProducer<byte[]?, byte[]> producer)
    {
        using var dir = new TempDir();
        var restored = Owner(options, producer, dir).Loader.Load([Partition])[Partition];
        Assert.NotNull(restored);
        return (restored.EventsOffset, restored.LabelsOffset);
    }

    private static IProducer<byte[]?, byte[]> Producer(KafkaOptions options) =>
        new ProducerBuilder<byte[]?, byte[]>(ClientSettings.Producer(options)).SetLogHandler((_, _) => { }).Build();

    private static KafkaOptions Options(MockCluster cluster, string prefix)
    {
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, prefix, "unused");
        options.CheckpointTopic = prefix + "-checkpoints";
        // The mock makes a topic on its first record; the worker needs it to exist beforehand.
        Topics.Produce(cluster.Bootstrap, options.CheckpointTopic, [("unrelated", "{}", TestStream.StartMs)]);
        return options;
    }

    /// <summary>
    /// A checkpoint of about 1.2 MB (three chunks), its feature names drawn from
    /// <paramref name="seed"/> so two owners' payloads differ; labels offset = events offset.
    /// </summary>
    private static PartitionCheckpoint Checkpoint(string eventsTopic, long eventsOffset, int seed)
    {
        var random = new Random(seed);
        return new()
        {
            EventsTopic = eventsTopic,
            Partition = Partition,
            EventsOffset = eventsOffset,
            LabelsOffset = eventsOffset,
            WrittenAt = DateTime.UtcNow,
            Snapshot = new()
            {
                FeatureNames = Enumerable.Range(0, 40_000).ToDictionary(i => i.ToString("D7", System.Globalization.CultureInfo.InvariantCulture), _ => $"courier=c-{random.Next(1_000_000):D6}"),
            },
        };
    }
}
