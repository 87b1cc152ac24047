using Confluent.Kafka;
using Driftline.Kafka.Options;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Moves consumed records into their partitions' merge queues. <see cref="Pull"/> stages up
/// to <see cref="MaxPull"/> records a topic while a batch may still be draining the partitions;
/// <see cref="ApplyStaged"/> queues them, in the order consumed, once the engines are idle.
/// A queue that reaches <see cref="KafkaOptions.MaxBufferedPerPartition"/> pauses its partition
/// (backpressure, not memory) until the merge has taken it down to half. Used by the worker's
/// loop thread only.
/// </summary>
internal sealed class RecordIntake(KafkaOptions options, Dictionary<int, PartitionState> partitions, WorkerStats stats)
{
    private const int MaxPull = 2_000;

    private readonly List<ConsumeResult<byte[]?, byte[]>> _stagedEvents = [];
    private readonly List<ConsumeResult<byte[]?, byte[]>> _stagedLabels = [];

    /// <summary>Sees each record as it is consumed (the latency benchmark), or null.</summary>
    public IRecordProbe? Probe { get; set; }

    /// <summary>
    /// Consumes up to <see cref="MaxPull"/> records into the staging list without touching the
    /// partitions (a batch may be draining them): <see cref="ApplyStaged"/> queues them later,
    /// in the order consumed, on this thread.
    /// </summary>
    public int Pull(IConsumer<byte[]?, byte[]> consumer, bool fromLabels, TimeSpan firstWait)
    {
        var staged = fromLabels ? _stagedLabels : _stagedEvents;
        int got = 0;
        for (int i = 0; i < MaxPull; i++)
        {
            var result = consumer.Consume(i == 0 ? firstWait : TimeSpan.Zero);
            if (result is null)
            {
                break;
            }
            staged.Add(result);
            if (!result.IsPartitionEOF)
            {
                got++;
                Probe?.Consumed(fromLabels, result.Partition.Value, result.Offset.Value, result.Message.Value);
            }
        }
        return got;
    }

    /// <summary>Queues the staged records on their partitions (engines idle), events first, as <see cref="Pull"/> consumed them.</summary>
    public void ApplyStaged(IConsumer<byte[]?, byte[]> events, IConsumer<byte[]?, byte[]>? labels)
    {
        ApplyAll(events, _stagedEvents, fromLabels: false);
        if (labels is not null)
        {
            ApplyAll(labels, _stagedLabels, fromLabels: true);
        }
    }

    private void ApplyAll(IConsumer<byte[]?, byte[]> consumer, List<ConsumeResult<byte[]?, byte[]>> staged, bool fromLabels)
    {
        foreach (var result in staged)
        {
            Apply(consumer, result, fromLabels);
        }
        staged.Clear();
    }

    private void Apply(IConsumer<byte[]?, byte[]> consumer, ConsumeResult<byte[]?, byte[]> result, bool fromLabels)
    {
        if (!partitions.TryGetValue(result.Partition.Value, out var state))
        {
            return; // fetched before the partition was given up
        }
        long next = fromLabels ? state.LabelsNext : state.EventsNext;
        if (result.IsPartitionEOF)
        {
            if (fromLabels)
            {
                state.LabelsAtEnd = true;
                state.LabelsNext = next == PartitionState.Unknown && state.Labels.Count == 0 ? result.Offset.Value : next;
            }
            else
            {
                state.EventsAtEnd = true;
                state.EventsNext = next == PartitionState.Unknown && state.Events.Count == 0 ? result.Offset.Value : next;
            }
            return;
        }
        var queue = fromLabels ? state.Labels : state.Events;
        long queuedUpTo = fromLabels ? state.LabelsQueuedUpTo : state.EventsQueuedUpTo;
        if (queuedUpTo != PartitionState.Unknown && result.Offset.Value < queuedUpTo)
        {
            return; // already processed or queued (a re-fetch after a seek)
        }
        if (fromLabels)
        {
            state.LabelsQueuedUpTo = result.Offset.Value + 1;
        }
        else
        {
            state.EventsQueuedUpTo = result.Offset.Value + 1;
        }
        queue.Enqueue(new BufferedRecord(result.Offset.Value, result.Message.Timestamp.UnixTimestampMs, result.Message.Key, result.Message.Value ?? [], Environment.TickCount64));
        if (fromLabels)
        {
            state.LabelsAtEnd = false;
            stats.LabelsIn++;
        }
        else
        {
            state.EventsAtEnd = false;
            state.EventsWatermarkMs = Math.Max(state.EventsWatermarkMs, result.Message.Timestamp.UnixTimestampMs);
            stats.EventsIn++;
        }
        if (queue.Count >= options.MaxBufferedPerPartition)
        {
            // Backpressure: the other side is behind; stop fetching this side until the merge catches up.
            // The topic is named here: the consume results do not carry it (ClientSettings).
            consumer.Pause([new TopicPartition(fromLabels ? options.LabelsTopic : options.EventsTopic, result.Partition)]);
            stats.Pauses++;
            if (fromLabels)
            {
                state.LabelsPaused = true;
            }
            else
            {
                state.EventsPaused = true;
            }
        }
    }

    /// <summary>Resumes a paused side of <paramref name="state"/> once its queue is down to half the limit.</summary>
    public void Resume(IConsumer<byte[]?, byte[]>? consumer, PartitionState state, bool fromLabels)
    {
        bool paused = fromLabels ? state.LabelsPaused : state.EventsPaused;
        int queued = fromLabels ? state.Labels.Count : state.Events.Count;
        if (consumer is null || !paused || queued > options.MaxBufferedPerPartition / 2)
        {
            return;
        }
        consumer.Resume([new TopicPartition(fromLabels ? options.LabelsTopic! : options.EventsTopic, state.Partition)]);
        if (fromLabels)
        {
            state.LabelsPaused = false;
        }
        else
        {
            state.EventsPaused = false;
        }
    }
}
