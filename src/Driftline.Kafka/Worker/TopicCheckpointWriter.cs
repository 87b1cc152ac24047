using System.IO.Hashing;
using System.Text;
using Confluent.Kafka;
using Driftline.Kafka.Checkpoints;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Writes checkpoints to the compacted checkpoint topic and waits until the broker has
/// acknowledged them: the chunks (and tombstones for leftovers of a longer checkpoint in the
/// same slot) first, then, once they are all acknowledged, the manifest. Every record of one
/// events partition goes to checkpoint-topic partition <c>events partition mod partition
/// count</c>, so the manifest always follows its chunks in one log. One write at a time;
/// <see cref="Remember"/> may run beside it (for other partitions).
/// </summary>
internal sealed class TopicCheckpointWriter
{
    private static readonly TimeSpan AckLimit = TimeSpan.FromSeconds(60);

    private readonly IProducer<byte[]?, byte[]> _producer;
    private readonly Lock _gate = new();
    private readonly Dictionary<int, (long Generation, int Slot, int Extent0, int Extent1)> _positions = [];
    // The buffer every full chunk is written through, one write at a time (see Write).
    private byte[]? _fullChunk;

    /// <summary>Writes through <paramref name="producer"/> to <paramref name="topic"/>, which has <paramref name="partitions"/> partitions.</summary>
    public TopicCheckpointWriter(IProducer<byte[]?, byte[]> producer, string topic, int partitions)
    {
        ArgumentNullException.ThrowIfNull(producer);
        ArgumentException.ThrowIfNullOrEmpty(topic);
        ArgumentOutOfRangeException.ThrowIfLessThan(partitions, 1);
        _producer = producer;
        Topic = topic;
        Partitions = partitions;
    }

    /// <summary>The checkpoint topic.</summary>
    public string Topic { get; }

    /// <summary>Its partition count, read at start.</summary>
    public int Partitions { get; }

    /// <summary>The checkpoint-topic partition that holds <paramref name="eventsPartition"/>'s checkpoints.</summary>
    public int PartitionOf(int eventsPartition) => eventsPartition % Partitions;

    /// <summary>
    /// Records what the topic holds for a partition just assigned: its manifest (null when
    /// none) and how many chunk keys each slot holds, so the next write picks the other slot,
    /// the next generation and the leftovers to delete.
    /// </summary>
    public void Remember(int partition, CheckpointManifest? manifest, int extent0, int extent1)
    {
        lock (_gate)
        {
            // With no manifest, slot 1 counts as current so the first write fills slot 0.
            _positions[partition] = (manifest?.Generation ?? 0, manifest?.Slot ?? 1, extent0, extent1);
        }
    }

    /// <summary>
    /// Writes <paramref name="checkpoint"/> (<paramref name="payload"/> is its JSON) and returns
    /// once the broker has acknowledged every record. Throws <see cref="KafkaWorkerException"/>
    /// on a failed delivery or after a minute without acknowledgement: the offset it covers
    /// must not be committed then.
    /// </summary>
    public void Write(PartitionCheckpoint checkpoint, ReadOnlyMemory<byte> payload)
    {
        ArgumentNullException.ThrowIfNull(checkpoint);
        (long Generation, int Slot, int Extent0, int Extent1) last;
        lock (_gate)
        {
            last = _positions.GetValueOrDefault(checkpoint.Partition, (0, 1, 0, 0));
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
                sent.Add(ProduceWhenRoom(partition, Key(TopicCheckpointCodec.ChunkKey(checkpoint.EventsTopic, checkpoint.Partition, slot, i)), value));
            }
            for (int i = chunks; i < leftovers; i++)
            {
                sent.Add(ProduceWhenRoom(partition, Key(TopicCheckpointCodec.ChunkKey(checkpoint.EventsTopic, checkpoint.Partition, slot, i)), null));
            }
        });
        // Only now is the new generation whole on the broker; the manifest makes it the current one.
        var manifest = TopicCheckpointCodec.Manifest(checkpoint, generation, slot, chunks, payload.Length, hash);
        Send(partition, sent => sent.Add(ProduceWhenRoom(partition, Key(TopicCheckpointCodec.ManifestKey(checkpoint.EventsTopic, checkpoint.Partition)), manifest)));
        lock (_gate)
        {
            _positions[checkpoint.Partition] = (generation, slot, slot == 0 ? chunks : last.Extent0, slot == 1 ? chunks : last.Extent1);
        }
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
