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
        int Count(string topic)
        {
            var metadata = admin.GetMetadata(topic, TimeSpan.FromSeconds(10));
            var t = metadata.Topics.FirstOrDefault(x => x.Topic == topic);
            return t is null || t.Error.IsError ? -1 : t.Partitions.Count;
        }
        int events = Count(options.EventsTopic);
        int labels = Count(options.LabelsTopic!);
        if (labels < 0)
        {
            throw new KafkaWorkerException($"labels topic '{options.LabelsTopic}' does not exist; create it with the same number of partitions as '{options.EventsTopic}' and key each label like its event");
        }
        if (events >= 0 && events != labels)
        {
            throw new KafkaWorkerException($"labels topic '{options.LabelsTopic}' has {labels} partitions but events topic '{options.EventsTopic}' has {events}: they must be co-partitioned (same count, labels keyed like their events)");
        }
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
