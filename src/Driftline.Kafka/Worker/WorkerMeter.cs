using System.Diagnostics.Metrics;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The worker's measures as System.Diagnostics.Metrics instruments (meter
/// <see cref="MeterName"/>), observed from <see cref="WorkerStats"/> at scrape time so the hot
/// loop only bumps plain counters.
/// </summary>
internal sealed class WorkerMeter : IDisposable
{
    /// <summary>Name of the meter, for exporters.</summary>
    public const string MeterName = "Driftline.Worker";

    private readonly Meter _meter = new(MeterName);

    /// <summary>Publishes <paramref name="stats"/>.</summary>
    public WorkerMeter(WorkerStats stats)
    {
        ArgumentNullException.ThrowIfNull(stats);
        _meter.CreateObservableCounter("driftline.events.in", () => stats.EventsIn, "{record}", "Records consumed from the events topic");
        _meter.CreateObservableCounter("driftline.labels.in", () => stats.LabelsIn, "{record}", "Records consumed from the labels topic");
        _meter.CreateObservableCounter("driftline.predictions.out", () => stats.Predictions, "{prediction}", "Predictions produced");
        _meter.CreateObservableCounter("driftline.labels.joined", () => stats.LabelsJoined, "{label}", "Labels that graded a prediction, inline or late");
        _meter.CreateObservableCounter("driftline.labels.expired", () => stats.LastMetrics?.ExpiredLabels ?? 0, "{label}", "Predictions that left the pending store unlabelled (latest partition reporting)");
        _meter.CreateObservableCounter("driftline.dead_letters", () => stats.DeadLetters, "{record}", "Records sent to the dead-letter topic");
        _meter.CreateObservableCounter("driftline.alerts", () => stats.Alerts, "{alert}", "Alerts raised or cleared");
        _meter.CreateObservableCounter("driftline.backpressure.pauses", () => stats.Pauses, "{pause}", "Times a partition was paused because its merge queue was full");
        _meter.CreateObservableCounter("driftline.backpressure.produce_waits", () => stats.ProduceWaits, "{wait}", "Times the producer's send queue was full and the worker waited");
        _meter.CreateObservableCounter("driftline.checkpoints", () => stats.Checkpoints, "{checkpoint}", "Partition checkpoints written");
        _meter.CreateObservableGauge("driftline.alerts.active", () => stats.AlertsActive, "{alert}", "Alert rules raised now, over the owned partitions");
        _meter.CreateObservableGauge("driftline.partitions", () => stats.Partitions, "{partition}", "Events partitions owned");
        _meter.CreateObservableGauge("driftline.consumer.lag", () => stats.Lag, "{record}", "Events behind the end of the owned partitions, at the last checkpoint");
        _meter.CreateObservableGauge("driftline.checkpoint.age", () => stats.LastCheckpointAt == DateTime.MinValue ? 0 : (DateTime.UtcNow - stats.LastCheckpointAt).TotalSeconds, "s", "Time since the last checkpoint");
        _meter.CreateObservableGauge("driftline.checkpoint.duration", () => stats.LastCheckpointMs / 1000, "s", "How long the last checkpoint held the loop (the cut; all of it at a revocation or a stop)");
        _meter.CreateObservableGauge("driftline.window.log_loss", () => Ready(stats) ? stats.LastMetrics!.Value.Window.LogLoss : double.NaN, "1", "Rolling-window log-loss of the latest partition to report");
        _meter.CreateObservableGauge("driftline.window.ece", () => Ready(stats) ? stats.LastMetrics!.Value.Window.Ece : double.NaN, "1", "Rolling-window expected calibration error of the latest partition to report");
        _meter.CreateObservableCounter("driftline.challenger.decisions", () => stats.ChallengerDecisions, "{decision}", "Times a challenger was declared better than the champion (challenger-better alerts)");
        // One series per challenger and partition: each partition runs its own champion and test.
        Challenger("driftline.challenger.log_loss", f => f.ChallengerLogLoss, "The challenger's mean log-loss over the labels paired with the champion's");
        Challenger("driftline.challenger.champion_log_loss", f => f.ChampionLogLoss, "The champion's mean log-loss over the same paired labels");
        Challenger("driftline.challenger.ece", f => f.ChallengerEce, "The challenger's rolling-window expected calibration error");
        Challenger("driftline.challenger.champion_ece", f => f.ChampionEce, "The champion's rolling-window expected calibration error on the same partition");
        Challenger("driftline.challenger.evidence", f => f.Evidence, "Log of the betting wealth of the challenger's sequential test; declared better at the threshold");
        Challenger("driftline.challenger.evidence_threshold", f => f.Threshold, "ln(1/Challengers:ErrorRate), the evidence needed to declare the challenger better");
        Challenger("driftline.challenger.paired_labels", f => f.Paired, "Labels graded by both the champion and the challenger, paired in the test");

        void Challenger(string name, Func<ChallengerFigures, double> pick, string description) =>
            _meter.CreateObservableGauge(name, () => stats.Challengers.Select(kv => new Measurement<double>(pick(kv.Value),
                new KeyValuePair<string, object?>("challenger", kv.Key.Challenger),
                new KeyValuePair<string, object?>("partition", kv.Key.Partition.ToString(System.Globalization.CultureInfo.InvariantCulture)))),
                "1", description, [new KeyValuePair<string, object?>(LabelsTag, "challenger,partition")]);
    }

    /// <summary>Instrument tag marking an instrument whose measurements carry labels (its value names them).</summary>
    public const string LabelsTag = "labels";

    /// <summary>The meter itself, for an exporter that must take this instance's instruments only.</summary>
    public Meter Meter => _meter;

    /// <inheritdoc />
    public void Dispose() => _meter.Dispose();

    private static bool Ready(WorkerStats stats) => stats.LastMetrics is { } row && row.Window.IsReady;
}
