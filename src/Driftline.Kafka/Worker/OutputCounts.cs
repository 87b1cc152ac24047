using Driftline.Core.Scoring;

namespace Driftline.Kafka.Worker;

/// <summary>
/// One partition's counts since the loop last collected them: written by whichever thread
/// drains that partition, added into <see cref="WorkerStats"/> by the loop thread afterwards,
/// so the shared statistics keep a single writer.
/// </summary>
internal sealed class OutputCounts
{
    /// <summary>Predictions produced.</summary>
    public long Predictions;

    /// <summary>Records dead-lettered.</summary>
    public long DeadLetters;

    /// <summary>Alerts raised or cleared.</summary>
    public long Alerts;

    /// <summary>Raised minus cleared.</summary>
    public long AlertsActive;

    /// <summary>Waits for room in the producer's queue.</summary>
    public long ProduceWaits;

    /// <summary>Labels that graded a prediction.</summary>
    public long LabelsJoined;

    /// <summary>Times a challenger was declared better.</summary>
    public long ChallengerDecisions;

    /// <summary>The latest metrics row, or null when none came.</summary>
    public MetricsRow? LastMetrics;

    /// <summary>Adds the counts into <paramref name="stats"/> and starts again from zero.</summary>
    public void MoveTo(WorkerStats stats)
    {
        stats.Predictions += Predictions;
        stats.DeadLetters += DeadLetters;
        stats.Alerts += Alerts;
        stats.AlertsActive += AlertsActive;
        stats.ProduceWaits += ProduceWaits;
        stats.LabelsJoined += LabelsJoined;
        stats.ChallengerDecisions += ChallengerDecisions;
        if (LastMetrics is not null)
        {
            stats.LastMetrics = LastMetrics;
        }
        Predictions = DeadLetters = Alerts = AlertsActive = ProduceWaits = LabelsJoined = ChallengerDecisions = 0;
        LastMetrics = null;
    }
}
