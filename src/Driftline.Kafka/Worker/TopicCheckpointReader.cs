using System.Text;
using Confluent.Kafka;
using Driftline.Kafka.Options;
using Driftline.Kafka.Checkpoints;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Reads what the checkpoint topic holds for some events partitions: a consumer of its own,
/// assigned by hand (no group) to the checkpoint-topic partitions that hold them, reads each
/// from its start to the end it had when the read began. Checkpoints written after that are
/// not seen, which is right: nobody else owns these partitions now.
/// </summary>
internal static class TopicCheckpointReader
{
    private static readonly TimeSpan MetadataLimit = TimeSpan.FromSeconds(10);
    private static readonly TimeSpan ReadLimit = TimeSpan.FromSeconds(60);

    /// <summary>
    /// Reads the checkpoints of <paramref name="partitions"/> through <paramref name="writer"/>'s
    /// topic and partition map. Throws <see cref="KafkaWorkerException"/> when the topic cannot
    /// be read to its end within a minute.
    /// </summary>
    public static TopicCheckpointAssembler Read(KafkaOptions options, TopicCheckpointWriter writer, IReadOnlyCollection<int> partitions)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(writer);
        var assembler = new TopicCheckpointAssembler(options.EventsTopic, partitions, writer.Topic);
        var wanted = partitions.Select(writer.PartitionOf).Distinct().Select(p => new TopicPartition(writer.Topic, p)).ToList();
        if (wanted.Count == 0)
        {
            return assembler;
        }
        using var consumer = new ConsumerBuilder<byte[]?, byte[]?>(ClientSettings.CheckpointReader(options))
            .SetErrorHandler((_, e) => Log.Warning("Kafka checkpoint reader: {Reason} ({Code})", e.Reason, e.Code))
            .SetLogHandler((_, m) => ClientLog.Write("checkpoint reader", m))
            .Build();
        var clock = System.Diagnostics.Stopwatch.StartNew();
        long records = 0;
        try
        {
            // Read up to the end as it is now; partitions already empty need no fetch at all.
            var ends = new Dictionary<int, long>();
            foreach (var tp in wanted)
            {
                var marks = consumer.QueryWatermarkOffsets(tp, MetadataLimit);
                if (marks.High.Value > marks.Low.Value)
                {
                    ends[tp.Partition.Value] = marks.High.Value;
                }
            }
            consumer.Assign(ends.Keys.Select(p => new TopicPartitionOffset(writer.Topic, p, Offset.Beginning)));
            while (ends.Count > 0)
            {
                if (clock.Elapsed > ReadLimit)
                {
                    throw new KafkaWorkerException($"could not read checkpoint topic '{writer.Topic}' to its end within {ReadLimit.TotalSeconds:0} s ({records} records read); stopping rather than starting partitions {string.Join(",", partitions)} without their checkpoints");
                }
                var result = consumer.Consume(TimeSpan.FromMilliseconds(100));
                if (result is null || !ends.TryGetValue(result.Partition.Value, out long end))
                {
                    continue;
                }
                if (!result.IsPartitionEOF && result.Message.Key is { } key)
                {
                    assembler.Add(Encoding.UTF8.GetString(key), result.Message.Value);
                    records++;
                }
                // Compaction leaves gaps in the offsets, so "reached" is at or past the end.
                if (result.Offset.Value + (result.IsPartitionEOF ? 0 : 1) >= end)
                {
                    ends.Remove(result.Partition.Value);
                }
            }
        }
        catch (KafkaException ex)
        {
            throw new KafkaWorkerException($"cannot read checkpoint topic '{writer.Topic}': {ex.Error.Reason} ({ex.Error.Code})", ex);
        }
        finally
        {
            consumer.Close();
        }
        Log.Debug("Read {Records} records of checkpoint topic {CheckpointTopic} for partitions {Partitions} in {Ms:0} ms", records, writer.Topic, partitions.ToArray(), clock.Elapsed.TotalMilliseconds);
        return assembler;
    }
}
