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
        using var seeded = Seeded(cluster, "fence-mix");
        var (options, other) = (seeded.Options, seeded.Producer);
        using var inner = Producer(options);
        var (gated, gate) = GatedProducer.Wrap(inner);
        using var a = Owner(options, gated);
        using var b = Owner(options, other);
        Assert.Equal(100, a.Load()!.EventsOffset);
        Assert.Equal(100, b.Load()!.EventsOffset);

        // The lagging owner's whole write goes out after the other's chunks, before its manifest.
        gate.BeforeManifest = () => b.Write(eventsOffset: 150, seed: 2);
        a.Write(eventsOffset: 200, seed: 1);

        Assert.Equal((200, 200), Restored(options, other));
    }

    [Fact]
    public void Load_ALaggingOwnerWritesLast_RestoresTheOneAhead()
    {
        using var cluster = new MockCluster();
        using var seeded = Seeded(cluster, "fence-late");
        var (options, producer) = (seeded.Options, seeded.Producer);
        using var a = Assigned(options, producer);
        using var b = Assigned(options, producer);

        a.Write(eventsOffset: 200, seed: 1);
        b.Write(eventsOffset: 150, seed: 2);
        a.Write(eventsOffset: 300, seed: 3);
        b.Write(eventsOffset: 160, seed: 4);

        Assert.Equal((300, 300), Restored(options, producer));
    }

    [Fact]
    public void Write_NewOwnersFirstWrite_DeletesTheOtherWritersKeysAndAZombieWritesItsOwnAgain()
    {
        using var cluster = new MockCluster();
        using var seeded = Seeded(cluster, "fence-clean");
        var (options, producer) = (seeded.Options, seeded.Producer);
        using var a = Assigned(options, producer);
        using var b = Assigned(options, producer);
        a.Write(eventsOffset: 200, seed: 1);
        a.Write(eventsOffset: 210, seed: 2);
        b.Write(eventsOffset: 150, seed: 3);
        // A's first write deleted the first owner's keys, which both saw; B's and A's are left.
        Assert.Equal([a.Writer.Id, b.Writer.Id], Seen(options, producer).Manifests(Partition).Select(m => m.Writer));

        using var c = Owner(options, producer);
        Assert.Equal(210, c.Load()!.EventsOffset);
        c.Write(eventsOffset: 220, seed: 4);

        var seen = Seen(options, producer);
        Assert.Equal([c.Writer.Id], seen.Manifests(Partition).Select(m => m.Writer));
        Assert.Equal((0, 0), (seen.KeysOfOthers(Partition, c.Writer.Id).Manifests.Count, seen.KeysOfOthers(Partition, c.Writer.Id).Chunks.Count));

        // B has not noticed yet: its next write puts back complete keys of its own.
        b.Write(eventsOffset: 230, seed: 5);
        seen = Seen(options, producer);
        var zombie = seen.Manifest(Partition, b.Writer.Id)!;
        Assert.Equal(230, zombie.EventsOffset);
        Assert.Equal(CheckpointStore.Serialize(Checkpoint(options.EventsTopic, 230, seed: 5)).Length, seen.Assemble(zombie).Length);
        Assert.Equal((230, 230), Restored(options, producer));
        // The next new owner deletes B's keys and C's.
        using var d = Assigned(options, producer);
        d.Write(eventsOffset: 240, seed: 6);
        Assert.Equal([d.Writer.Id], Seen(options, producer).Manifests(Partition).Select(m => m.Writer));
    }

    [Fact]
    public void Load_TopicOfTheOldLayout_RestoresItAndTheFirstWriteDeletesIt()
    {
        // An upgrade: the topic holds checkpoints of a build before per-writer keys (two
        // generations, so both slots). They must restore, and go once the new owner has written.
        using var cluster = new MockCluster();
        var options = Options(cluster, "fence-old");
        using var producer = Producer(options);
        Produce(options, producer, TopicCheckpointCodec.Encode(Checkpoint(options.EventsTopic, 90, seed: 7), CheckpointStore.Serialize(Checkpoint(options.EventsTopic, 90, seed: 7)), 1, slot: 0, writer: ""));
        Produce(options, producer, TopicCheckpointCodec.Encode(Checkpoint(options.EventsTopic, 120, seed: 8), CheckpointStore.Serialize(Checkpoint(options.EventsTopic, 120, seed: 8)), 2, slot: 1, writer: ""));
        using var owner = Owner(options, producer);

        var restored = owner.Load()!;

        Assert.Equal(120, restored.EventsOffset);
        Assert.Equal(CheckpointStore.Serialize(Checkpoint(options.EventsTopic, 120, seed: 8)), CheckpointStore.Serialize(restored));
        owner.Write(eventsOffset: 130, seed: 9);
        var seen = Seen(options, producer);
        Assert.Equal([owner.Writer.Id], seen.Manifests(Partition).Select(m => m.Writer));
        Assert.Empty(seen.KeysOfOthers(Partition, owner.Writer.Id).Chunks);
    }

    [Fact]
    public void Load_TheManifestAheadIsIncomplete_RestoresTheNextCompleteOneWithAWarning()
    {
        // What a new owner's deletion of a zombie's keys can leave when the zombie wrote again
        // meanwhile: a manifest ahead whose chunks are gone. The checkpoint behind it is whole.
        using var log = new LogCapture();
        using var cluster = new MockCluster();
        using var seeded = Seeded(cluster, "fence-hole");
        var (options, producer) = (seeded.Options, seeded.Producer);
        var ahead = TopicCheckpointCodec.Encode(Checkpoint(options.EventsTopic, 500, seed: 1), CheckpointStore.Serialize(Checkpoint(options.EventsTopic, 500, seed: 1)), 3, slot: 0, writer: "bad");
        ahead.RemoveAt(1);
        Produce(options, producer, ahead);

        Assert.Equal((100, 100), Restored(options, producer));
        Assert.Contains(log.Messages(Serilog.Events.LogEventLevel.Warning), m => m.StartsWith($"Partition {Partition}: the checkpoint of {options.EventsTopic} partition {Partition}", StringComparison.Ordinal)
            && m.Contains("writer 'bad', generation 3) is incomplete: chunk 1 of 3 is missing; trying the next checkpoint behind it", StringComparison.Ordinal));
    }

    /// <summary>One owner of the partition: a checkpoint-topic writer, and a folder of its own.</summary>
    private sealed class OwnerOf(KafkaOptions options, IProducer<byte[]?, byte[]> producer) : IDisposable
    {
        private readonly TempDir _dir = new();

        public TopicCheckpointWriter Writer { get; } = new(producer, options.CheckpointTopic!, MockCluster.Partitions);

        private CheckpointStore Store => new(_dir.Path);

        /// <summary>What the worker restores when the partition is assigned to it.</summary>
        public PartitionCheckpoint? Load() => new CheckpointLoader(options, Store, Writer).Load([Partition])[Partition];

        /// <summary>Writes as the worker does: the file, then (when kept) the topic's copy.</summary>
        public void Write(long eventsOffset, int seed)
        {
            var checkpoint = Checkpoint(options.EventsTopic, eventsOffset, seed);
            byte[] json = CheckpointStore.Serialize(checkpoint);
            Assert.Null(Store.Write(checkpoint, json, () => Writer.Write(checkpoint, json)));
        }

        public void Dispose() => _dir.Dispose();
    }

    private static OwnerOf Owner(KafkaOptions options, IProducer<byte[]?, byte[]> producer) => new(options, producer);

    /// <summary>An owner the partition was just assigned to: it has read the topic and restored.</summary>
    private static OwnerOf Assigned(KafkaOptions options, IProducer<byte[]?, byte[]> producer)
    {
        var owner = Owner(options, producer);
        owner.Load();
        return owner;
    }

    /// <summary>A checkpoint topic where a first owner left a checkpoint at events offset 100, which the later owners restore.</summary>
    private static SeededTopic Seeded(MockCluster cluster, string prefix)
    {
        var options = Options(cluster, prefix);
        var producer = Producer(options);
        var checkpoint = Checkpoint(options.EventsTopic, 100, seed: 0);
        new TopicCheckpointWriter(producer, options.CheckpointTopic!, MockCluster.Partitions).Write(checkpoint, CheckpointStore.Serialize(checkpoint));
        return new(options, producer);
    }

    private sealed record SeededTopic(KafkaOptions Options, IProducer<byte[]?, byte[]> Producer) : IDisposable
    {
        public void Dispose() => Producer.Dispose();
    }

    /// <summary>What a third worker, with an empty folder of its own, restores.</summary>
    private static (long EventsOffset, long LabelsOffset) Restored(KafkaOptions options, IProducer<byte[]?, byte[]> producer)
    {
        using var owner = Owner(options, producer);
        var restored = owner.Load();
        Assert.NotNull(restored);
        return (restored.EventsOffset, restored.LabelsOffset);
    }

    /// <summary>What the topic holds for the partition, read as a new owner reads it.</summary>
    private static TopicCheckpointAssembler Seen(KafkaOptions options, IProducer<byte[]?, byte[]> producer) =>
        TopicCheckpointReader.Read(options, new TopicCheckpointWriter(producer, options.CheckpointTopic!, MockCluster.Partitions), [Partition]);

    /// <summary>Sends records as they are, in order, to the topic partition the writer uses for <see cref="Partition"/>.</summary>
    private static void Produce(KafkaOptions options, IProducer<byte[]?, byte[]> producer, List<CheckpointRecord> records)
    {
        var target = new TopicPartition(options.CheckpointTopic, Partition % MockCluster.Partitions);
        foreach (var record in records)
        {
            producer.ProduceAsync(target, new Message<byte[]?, byte[]> { Key = System.Text.Encoding.UTF8.GetBytes(record.Key), Value = record.Value! }).GetAwaiter().GetResult();
        }
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
            WrittenAt = new DateTime(2026, 12, 3, 12, 0, 0, DateTimeKind.Utc).AddSeconds(eventsOffset),
            Snapshot = new()
            {
                FeatureNames = Enumerable.Range(0, 40_000).ToDictionary(i => i.ToString("D7", System.Globalization.CultureInfo.InvariantCulture), _ => $"courier=c-{random.Next(1_000_000):D6}"),
            },
        };
    }
}
