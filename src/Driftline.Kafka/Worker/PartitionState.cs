using Driftline.Core.Scoring;
using Driftline.Kafka.Checkpoints;

namespace Driftline.Kafka.Worker;

/// <summary>
/// One owned partition: its engine (so each key's model has one writer, on the worker that
/// owns the key's partition), the records consumed but not yet processed from the events
/// partition and the co-partitioned labels partition, and how far each has been processed.
/// </summary>
/// <remarks>
/// The two partitions are merged by message timestamp, events first on a tie. A record is
/// taken only when the other side has a record queued (so nothing earlier can still come)
/// or has reached its end; that makes the order a function of the data, not of fetch
/// timing, whenever the data is already there, so a restart replays the same order. A label
/// later than every event seen also waits (a bounded time) for the events side to pass its
/// timestamp. A label stamped earlier than its event (producer clocks apart by more than the
/// gap between them) still finds no prediction and is dead-lettered as unknown.
/// </remarks>
internal sealed class PartitionState
{
    /// <summary>Starts a partition from a checkpoint, or fresh when <paramref name="checkpoint"/> is null.</summary>
    public PartitionState(int partition, ScoringEngine engine, PartitionCheckpoint? checkpoint, bool hasLabels)
    {
        Partition = partition;
        Engine = engine;
        HasLabels = hasLabels;
        EventsNext = checkpoint?.EventsOffset ?? Unknown;
        LabelsNext = checkpoint?.LabelsOffset ?? Unknown;
        CheckpointedEvents = EventsNext;
        CheckpointedLabels = LabelsNext;
        EventsQueuedUpTo = EventsNext;
        LabelsQueuedUpTo = LabelsNext;
    }

    /// <summary>Marker for "no record processed yet and no checkpoint: position unknown".</summary>
    public const long Unknown = -1;

    /// <summary>The partition number.</summary>
    public int Partition { get; }

    /// <summary>The partition's engine (the champion); replaced when a challenger is promoted (<c>Challengers:AutoPromote</c>).</summary>
    public ScoringEngine Engine { get; set; }

    /// <summary>Parses and runs the partition's records (set at assignment).</summary>
    public RecordProcessor? Processor { get; init; }

    /// <summary>The champion's challengers on this partition (set at assignment; null without challengers).</summary>
    public Driftline.Core.Challengers.ChallengerPanel? Panel { get; set; }

    /// <summary>Each challenger's outputs on this partition, by name.</summary>
    public Dictionary<string, ChallengerSink> ChallengerSinks { get; } = new(StringComparer.Ordinal);

    /// <summary>The champion's latest metrics row on this partition (kept by the loop for the challenger figures).</summary>
    public Driftline.Core.Scoring.MetricsRow? LastMetrics { get; set; }

    /// <summary>The partition's counts since the loop last collected them (set at assignment).</summary>
    public OutputCounts Counts { get; init; } = new();

    /// <summary>True when a separate labels partition is merged in.</summary>
    public bool HasLabels { get; }

    /// <summary>Events consumed, not yet processed.</summary>
    public Queue<BufferedRecord> Events { get; } = new();

    /// <summary>Labels consumed, not yet processed.</summary>
    public Queue<BufferedRecord> Labels { get; } = new();

    /// <summary>Next events offset to process.</summary>
    public long EventsNext { get; set; }

    /// <summary>Next labels offset to process.</summary>
    public long LabelsNext { get; set; }

    /// <summary>Offset after the last events record queued.</summary>
    public long EventsQueuedUpTo { get; set; }

    /// <summary>Offset after the last labels record queued.</summary>
    public long LabelsQueuedUpTo { get; set; }

    /// <summary>True when every events record available has been queued.</summary>
    public bool EventsAtEnd { get; set; }

    /// <summary>True when every labels record available has been queued.</summary>
    public bool LabelsAtEnd { get; set; }

    /// <summary>Events offset in the last checkpoint.</summary>
    public long CheckpointedEvents { get; set; }

    /// <summary>Labels offset in the last checkpoint.</summary>
    public long CheckpointedLabels { get; set; }

    /// <summary>Models already listed in the worker's model keys.</summary>
    public int KnownModels { get; set; }

    /// <summary>Labels graded since the last checkpoint.</summary>
    public long LabelsSinceCheckpoint { get; set; }

    /// <summary>True while the events partition is paused because its queue is full.</summary>
    public bool EventsPaused { get; set; }

    /// <summary>True while the labels partition is paused because its queue is full.</summary>
    public bool LabelsPaused { get; set; }

    /// <summary>True when records were processed since the last checkpoint.</summary>
    public bool Dirty => EventsNext != CheckpointedEvents || LabelsNext != CheckpointedLabels;

    /// <summary>Latest message timestamp of the events queued so far (ms), the events side's watermark.</summary>
    public long EventsWatermarkMs { get; set; } = long.MinValue;

    /// <summary>
    /// Takes the next record in merged order, or returns false when the merge must wait for
    /// more input. <paramref name="fromLabels"/> tells which partition it came from. A label
    /// later than every event seen waits up to <paramref name="labelHoldMs"/> after it was
    /// queued for the events side to pass it: its event may be in the log but not fetched yet
    /// (the end reported for the partition can be older than the label), and joining it now
    /// would find no prediction.
    /// </summary>
    public bool TryTakeNext(long nowTicks, long labelHoldMs, out BufferedRecord record, out bool fromLabels)
    {
        bool haveEvent = Events.Count > 0;
        bool haveLabel = Labels.Count > 0;
        if (!HasLabels || (haveEvent && !haveLabel && LabelsAtEnd))
        {
            // Predictions never wait for labels that are not there.
            fromLabels = false;
            return Events.TryDequeue(out record);
        }
        if (haveEvent && haveLabel)
        {
            fromLabels = Labels.Peek().TimestampMs < Events.Peek().TimestampMs;
            record = fromLabels ? Labels.Dequeue() : Events.Dequeue();
            return true;
        }
        if (haveLabel && EventsAtEnd && (Labels.Peek().TimestampMs <= EventsWatermarkMs || nowTicks - Labels.Peek().QueuedAt >= labelHoldMs))
        {
            fromLabels = true;
            record = Labels.Dequeue();
            return true;
        }
        fromLabels = false;
        record = default;
        return false;
    }

    /// <summary>
    /// A checkpoint cut here and not yet snapshotted: the thread that drains the partition next
    /// takes it before any record. Set and cleared only while the engine is idle or by its drain.
    /// </summary>
    public CheckpointCut? DueCut { get; set; }

    /// <summary>A checkpoint of the engine as it is now, recorded at the next offsets of the cut it belongs to.</summary>
    public PartitionCheckpoint ToCheckpoint(string eventsTopic, string? labelsTopic, DateTime now, long eventsNext, long labelsNext) => new()
    {
        EventsTopic = eventsTopic,
        Partition = Partition,
        EventsOffset = eventsNext,
        LabelsTopic = labelsTopic,
        LabelsOffset = labelsNext,
        WrittenAt = now,
        Snapshot = Engine.Snapshot(),
        Challengers = Panel is null ? null
            : [.. Panel.Challengers.Select(c => new ChallengerCheckpoint { Name = c.Name, Snapshot = c.Engine.Snapshot(), Judge = c.Judge.Export() })],
        Promotions = Panel is { Promotions.Count: > 0 } ? [.. Panel.Promotions] : null,
    };
}
