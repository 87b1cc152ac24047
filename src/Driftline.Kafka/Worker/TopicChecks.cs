using Confluent.Kafka;
using Driftline.Kafka.Options;

namespace Driftline.Kafka.Worker;

/// <summary>Checks and measures over the topics' metadata.</summary>
internal static class TopicChecks
{
    /// <summary>Stops the worker when the labels topic is missing or has another partition count than the events topic.</summary>
    public static void RequireCoPartitioned(IProducer<byte[]?, byte[]> producer, KafkaOptions options)
    {
        if (options.LabelsTopic is null)
        {
            return;
        }
        using var admin = new DependentAdminClientBuilder(producer.Handle).Build();
        int events = PartitionCount(admin, options.EventsTopic);
        int labels = PartitionCount(admin, options.LabelsTopic!);
        if (labels < 0)
        {
            throw new KafkaWorkerException($"labels topic '{options.LabelsTopic}' does not exist; create it with the same number of partitions as '{options.EventsTopic}' and key each label like its event");
        }
        if (events >= 0 && events != labels)
        {
            throw new KafkaWorkerException($"labels topic '{options.LabelsTopic}' has {labels} partitions but events topic '{options.EventsTopic}' has {events}: they must be co-partitioned (same count, labels keyed like their events)");
        }
    }

    /// <summary>
    /// The checkpoint topic's partition count. Stops the worker when the topic is missing: a
    /// topic the broker made on first write would not be compacted, so its checkpoints would
    /// expire with the retention time.
    /// </summary>
    public static int RequireCheckpointTopic(IProducer<byte[]?, byte[]> producer, string topic)
    {
        using var admin = new DependentAdminClientBuilder(producer.Handle).Build();
        int partitions = PartitionCount(admin, topic);
        if (partitions < 1)
        {
            throw new KafkaWorkerException($"checkpoint topic '{topic}' does not exist; create it with cleanup.policy=compact (see docker/compose.yaml), or unset Kafka:CheckpointTopic to keep checkpoints in the folder only");
        }
        return partitions;
    }

    private static int PartitionCount(IAdminClient admin, string topic)
    {
        var metadata = admin.GetMetadata(topic, TimeSpan.FromSeconds(10));
        var t = metadata.Topics.FirstOrDefault(x => x.Topic == topic);
        return t is null || t.Error.IsError ? -1 : t.Partitions.Count;
    }

    /// <summary>Events behind the end of the owned partitions (from the consumer's cached watermarks; no broker call).</summary>
    public static long Lag(IConsumer<byte[]?, byte[]> events, string eventsTopic, IEnumerable<PartitionState> partitions)
    {
        long lag = 0;
        foreach (var state in partitions)
        {
            var marks = events.GetWatermarkOffsets(new TopicPartition(eventsTopic, state.Partition));
            if (marks.High.Value >= 0 && state.EventsNext >= 0)
            {
                lag += Math.Max(0, marks.High.Value - state.EventsNext);
            }
        }
        return lag;
    }
}
