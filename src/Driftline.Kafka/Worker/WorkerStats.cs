using Driftline.Core.Scoring;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The worker's running counts, written by the worker loop only and read by the metrics
/// endpoint and the tests (64-bit reads do not tear; a count a moment old is fine there).
/// </summary>
internal sealed class WorkerStats
{
    /// <summary>Records consumed from the events topic.</summary>
    public long EventsIn { get; set; }

    /// <summary>Records consumed from the labels topic.</summary>
    public long LabelsIn { get; set; }

    /// <summary>Predictions produced.</summary>
    public long Predictions { get; set; }

    /// <summary>Labels that graded a prediction (inline or late).</summary>
    public long LabelsJoined { get; set; }

    /// <summary>Records sent to the dead-letter topic.</summary>
    public long DeadLetters { get; set; }

    /// <summary>Alerts raised or cleared.</summary>
    public long Alerts { get; set; }

    /// <summary>Alert rules raised and not cleared, over the partitions' engines.</summary>
    public long AlertsActive { get; set; }

    /// <summary>Times the producer's queue was full and the loop waited.</summary>
    public long ProduceWaits { get; set; }

    /// <summary>Times a partition was paused because its merge queue was full (backpressure).</summary>
    public long Pauses { get; set; }

    /// <summary>Checkpoints written.</summary>
    public long Checkpoints { get; set; }

    /// <summary>When the last checkpoint was written (UTC), or MinValue before the first.</summary>
    public DateTime LastCheckpointAt { get; set; } = DateTime.MinValue;

    /// <summary>How long the last checkpoint held the loop (the cut; the whole checkpoint at a revocation or a stop), in milliseconds.</summary>
    public double LastCheckpointMs { get; set; }

    /// <summary>How long the last checkpoint waited for the broker to acknowledge the outputs before its cut (off the loop), in milliseconds.</summary>
    public double LastFlushMs { get; set; }

    /// <summary>The last checkpoint's snapshots, summed over its partitions (each taken by the thread draining it), in milliseconds.</summary>
    public double LastSnapshotMs { get; set; }

    /// <summary>From the cut to the last file written of the last checkpoint (off the loop), in milliseconds.</summary>
    public double LastWriteMs { get; set; }

    /// <summary>Partitions owned now.</summary>
    public int Partitions { get; set; }

    /// <summary>Events behind the high watermark, summed over owned partitions, at the last look.</summary>
    public long Lag { get; set; }

    /// <summary>Times a challenger was declared better (<c>challenger-better</c> lines), over every partition.</summary>
    public long ChallengerDecisions { get; set; }

    /// <summary>Each challenger against the champion on each owned partition, refreshed after every drain.</summary>
    public System.Collections.Concurrent.ConcurrentDictionary<(string Challenger, int Partition), ChallengerFigures> Challengers { get; } = new();

    /// <summary>The latest metrics row any engine reported.</summary>
    public MetricsRow? LastMetrics { get; set; }

    /// <summary>True once the loop runs; false again when it stops.</summary>
    public bool Running { get; set; }

    /// <summary>True while the latest client statistics showed a broker connection up (see <see cref="BrokerContact"/>).</summary>
    public bool BrokerReachable { get; set; }

    /// <summary>True once the events consumer has joined its group (the first assignment, or the group steady in the statistics).</summary>
    public bool GroupJoined { get; set; }

    /// <summary>The last time (UTC) a broker was seen up; the worker's start before the first contact.</summary>
    public DateTime LastBrokerContact { get; set; } = DateTime.UtcNow;

    /// <summary>Ready for work: the loop runs, a broker is reachable and the group was joined (what <c>/health</c> answers 200 for).</summary>
    public bool Healthy => Running && BrokerReachable && GroupJoined;
}
