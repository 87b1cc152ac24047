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
    public void Write(PartitionCheckpoint checkpoint, byte[] payload)
    {
        ArgumentNullException.ThrowIfNull(checkpoint);
        (long Generation, int Slot, int Extent0, int Extent1) last;
        lock (_gate)
        {
            last = _positions.GetValueOrDefault(checkpoint.Partition, (0, 1, 0, 0));
        }
        int slot = last.Slot == 0 ? 1 : 0;
        var records = TopicCheckpointCodec.Encode(checkpoint, payload, last.Generation + 1, slot);
        int chunks = records.Count - 1;
        int leftovers = slot == 0 ? last.Extent0 : last.Extent1;
        var first = records.Take(chunks).ToList();
        for (int i = chunks; i < leftovers; i++)
        {
            first.Add(new(TopicCheckpointCodec.ChunkKey(checkpoint.EventsTopic, checkpoint.Partition, slot, i), null));
        }
        var partition = new TopicPartition(Topic, PartitionOf(checkpoint.Partition));
        Send(partition, first);
        // Only now is the new generation whole on the broker; the manifest makes it the current one.
        Send(partition, [records[^1]]);
        lock (_gate)
        {
            _positions[checkpoint.Partition] = (last.Generation + 1, slot, slot == 0 ? chunks : last.Extent0, slot == 1 ? chunks : last.Extent1);
        }
    }

    private void Send(TopicPartition partition, List<CheckpointRecord> records)
    {
        var sent = new List<Task>(records.Count);
        try
        {
            foreach (var record in records)
            {
                var message = new Message<byte[]?, byte[]> { Key = Encoding.UTF8.GetBytes(record.Key), Value = record.Value! };
                sent.Add(ProduceWhenRoom(partition, message));
            }
            if (!Task.WhenAll(sent).Wait(AckLimit))
            {
                throw new KafkaWorkerException($"the broker has not acknowledged the checkpoint on topic '{Topic}' within {AckLimit.TotalSeconds:0} s; stopping without committing (a restart resumes from the last checkpoint)");
            }
        }
        catch (AggregateException ex) when (ex.InnerException is ProduceException<byte[]?, byte[]> produce)
        {
            throw Failed(produce);
        }
        catch (ProduceException<byte[]?, byte[]> produce)
        {
            throw Failed(produce);
        }
    }

    private Task ProduceWhenRoom(TopicPartition partition, Message<byte[]?, byte[]> message)
    {
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
