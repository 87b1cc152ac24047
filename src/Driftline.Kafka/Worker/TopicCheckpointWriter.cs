using System.IO.Hashing;
using System.Text;
using Confluent.Kafka;
using Driftline.Kafka.Checkpoints;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Writes checkpoints to the compacted checkpoint topic and waits until the broker has
/// acknowledged them: the chunks (and tombstones for leftovers of a longer checkpoint in the
/// same slot) first, then, once they are all acknowledged, the manifest. All under keys of
/// this writer's own (<see cref="Id"/>, see <see cref="TopicCheckpointCodec"/>), so another
/// owner of the same partition at the same time never overwrites them. Every record of one
/// events partition goes to checkpoint-topic partition <c>events partition mod partition
/// count</c>, so the manifest always follows its chunks in one log. One write at a time;
/// <see cref="Remember"/> may run beside it (for other partitions).
/// </summary>
internal sealed class TopicCheckpointWriter
{
    private static readonly TimeSpan AckLimit = TimeSpan.FromSeconds(60);

    private readonly IProducer<byte[]?, byte[]> _producer;
    private readonly Lock _gate = new();
    private readonly Dictionary<int, Position> _positions = [];
    // The buffer every full chunk is written through, one write at a time (see Write).
    private byte[]? _fullChunk;

    /// <summary>
    /// Writes through <paramref name="producer"/> to <paramref name="topic"/>, which has
    /// <paramref name="partitions"/> partitions, as writer <paramref name="id"/> (a new random
    /// one when null: one per worker start).
    /// </summary>
    public TopicCheckpointWriter(IProducer<byte[]?, byte[]> producer, string topic, int partitions, string? id = null)
    {
        ArgumentNullException.ThrowIfNull(producer);
        ArgumentException.ThrowIfNullOrEmpty(topic);
        ArgumentOutOfRangeException.ThrowIfLessThan(partitions, 1);
        id ??= TopicCheckpointCodec.NewWriterId();
        if (!TopicCheckpointCodec.IsWriterId(id))
        {
            throw new ArgumentException($"a writer id is 1 to {TopicCheckpointCodec.MaxWriterLength} lowercase hex digits, not '{id}'", nameof(id));
        }
        _producer = producer;
        Topic = topic;
        Partitions = partitions;
        Id = id;
    }

    /// <summary>The checkpoint topic.</summary>
    public string Topic { get; }

    /// <summary>Its partition count, read at start.</summary>
    public int Partitions { get; }

    /// <summary>This writer's id, the part of its keys after the partition.</summary>
    public string Id { get; }

    /// <summary>The checkpoint-topic partition that holds <paramref name="eventsPartition"/>'s checkpoints.</summary>
    public int PartitionOf(int eventsPartition) => eventsPartition % Partitions;

    /// <summary>
    /// Records what the topic holds for a partition just assigned (<paramref name="seen"/>, as
    /// read): this writer's own manifest and chunk keys, if it wrote the partition before, so
    /// the next write picks its other slot, its next generation and the leftovers to delete;
    /// and every other writer's keys of the partition, which the next write deletes once it is
    /// acknowledged (they are all behind it: the partition resumes from the one ahead of them).
    /// Throws <see cref="InvalidDataException"/> when this writer's own manifest is unreadable.
    /// </summary>
    public void Remember(int partition, TopicCheckpointAssembler seen)
    {
        ArgumentNullException.ThrowIfNull(seen);
        var own = seen.Manifest(partition, Id);
        var others = seen.KeysOfOthers(partition, Id);
        lock (_gate)
        {
            // With no manifest of its own, slot 1 counts as current so the first write fills slot 0.
            _positions[partition] = new(own?.Generation ?? 0, own?.Slot ?? 1, seen.SlotExtent(partition, Id, 0), seen.SlotExtent(partition, Id, 1), others.Manifests, others.Chunks);
        }
    }

    /// <summary>
    /// Writes <paramref name="checkpoint"/> (<paramref name="payload"/> is its JSON) and returns
    /// once the broker has acknowledged every record, and, on the first write after
    /// <see cref="Remember"/>, the tombstones for the other writers' keys it saw. Throws
    /// <see cref="KafkaWorkerException"/> on a failed delivery or after a minute without
    /// acknowledgement: the offset it covers must not be committed then.
    /// </summary>
    public void Write(PartitionCheckpoint checkpoint, ReadOnlyMemory<byte> payload)
    {
        ArgumentNullException.ThrowIfNull(checkpoint);
        Position last;
        lock (_gate)
        {
            last = _positions.GetValueOrDefault(checkpoint.Partition, Position.None);
        }
        int slot = last.Slot == 0 ? 1 : 0;
        long generation = last.Generation + 1;
        ulong hash = XxHash64.HashToUInt64(payload.Span);
        int chunks = TopicCheckpointCodec.ChunkCount(payload.Length);
        int leftovers = slot == 0 ? last.Extent0 : last.Extent1;
        var partition = new TopicPartition(Topic, PartitionOf(checkpoint.Partition));
        Send(partition, sent =>
        {
            for (int i = 0; i < chunks; i++)
            {
                var data = TopicCheckpointCodec.ChunkData(payload.Span, i);
                // Every full chunk goes through one kept buffer: librdkafka copies a message's value
                // before the produce call returns (Confluent.Kafka's SafeKafkaHandle.Produce passes
                // RD_KAFKA_MSG_F_COPY), so the buffer may be refilled at once. A new 512 KiB array per
                // chunk landed on the large-object heap and brought gen2 collections with it.
                byte[] value = data.Length == TopicCheckpointCodec.ChunkBytes
                    ? _fullChunk ??= new byte[TopicCheckpointCodec.HeaderBytes + TopicCheckpointCodec.ChunkBytes]
                    : new byte[TopicCheckpointCodec.HeaderBytes + data.Length];
                TopicCheckpointCodec.WriteChunk(value, data, generation, slot, i, chunks, payload.Length, hash);
                sent.Add(ProduceWhenRoom(partition, Key(TopicCheckpointCodec.ChunkKey(checkpoint.EventsTopic, checkpoint.Partition, Id, slot, i)), value));
            }
            for (int i = chunks; i < leftovers; i++)
            {
                sent.Add(ProduceWhenRoom(partition, Key(TopicCheckpointCodec.ChunkKey(checkpoint.EventsTopic, checkpoint.Partition, Id, slot, i)), null));
            }
        });
        // Only now is the new generation whole on the broker; the manifest makes it the current one.
        var manifest = TopicCheckpointCodec.Manifest(checkpoint, generation, slot, chunks, payload.Length, hash, Id);
        Send(partition, sent => sent.Add(ProduceWhenRoom(partition, Key(TopicCheckpointCodec.ManifestKey(checkpoint.EventsTopic, checkpoint.Partition, Id)), manifest)));
        if (last.OtherManifests.Count + last.OtherChunks.Count > 0)
        {
            // Manifests before chunks: a reader never finds one of them naming chunks already deleted.
            foreach (var keys in new[] { last.OtherManifests, last.OtherChunks }.Where(k => k.Count > 0))
            {
                Send(partition, sent => sent.AddRange(keys.Select(k => ProduceWhenRoom(partition, Key(k), null))));
            }
            Log.Information("Partition {Partition}: deleted the {Manifests} manifests and {Chunks} chunks of other writers found at assignment from checkpoint topic {CheckpointTopic} (this writer is {Writer})",
                checkpoint.Partition, last.OtherManifests.Count, last.OtherChunks.Count, Topic, Id);
        }
        lock (_gate)
        {
            _positions[checkpoint.Partition] = new(generation, slot, slot == 0 ? chunks : last.Extent0, slot == 1 ? chunks : last.Extent1, [], []);
        }
    }

    /// <summary>What the writer knows of one partition's keys on the topic.</summary>
    private readonly record struct Position(long Generation, int Slot, int Extent0, int Extent1, IReadOnlyList<string> OtherManifests, IReadOnlyList<string> OtherChunks)
    {
        public static Position None => new(0, 1, 0, 0, [], []);
    }

    private static byte[] Key(string key) => Encoding.UTF8.GetBytes(key);

    /// <summary>Produces what <paramref name="produce"/> adds and waits for all of it to be acknowledged.</summary>
    private void Send(TopicPartition partition, Action<List<Task>> produce)
    {
        var sent = new List<Task>();
        try
        {
            produce(sent);
            if (!Task.WhenAll(sent).Wait(AckLimit))
            {
                throw new KafkaWorkerException($"the broker has not acknowledged the checkpoint on topic '{Topic}' within {AckLimit.TotalSeconds:0} s; stopping without committing (a restart resumes from the last checkpoint)");
            }
        }
        catch (AggregateException ex) when (ex.InnerException is ProduceException<byte[]?, byte[]> produceFailure)
        {
            throw Failed(produceFailure);
        }
        catch (ProduceException<byte[]?, byte[]> produceFailure)
        {
            throw Failed(produceFailure);
        }
    }

    private Task ProduceWhenRoom(TopicPartition partition, byte[] key, byte[]? value)
    {
        var message = new Message<byte[]?, byte[]> { Key = key, Value = value! };
        while (true)
        {
            try
            {
                return _producer.ProduceAsync(partition, message);
            }
            catch (ProduceException<byte[]?, byte[]> ex) when (ex.Error.Code == ErrorCode.Local_QueueFull)
            {
                // The send queue is full of predictions; it drains on librdkafka's threads.
                Thread.Sleep(10);
            }
        }
    }

    private KafkaWorkerException Failed(ProduceException<byte[]?, byte[]> ex) =>
        new($"cannot write a checkpoint to topic '{Topic}': {ex.Error.Reason} ({ex.Error.Code})", ex);
}
