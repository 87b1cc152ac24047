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
    }

    /// <summary>The meter itself, for an exporter that must take this instance's instruments only.</summary>
    public Meter Meter => _meter;

    /// <inheritdoc />
    public void Dispose() => _meter.Dispose();

    private static bool Ready(WorkerStats stats) => stats.LastMetrics is { } row && row.Window.IsReady;
}
