using Driftline.Core.Alerts;
using Driftline.Core.Scoring;

namespace Driftline.Pipeline;

/// <summary>Collects the core's results into the current <see cref="OutputBatch"/>.</summary>
internal sealed class BatchSink : IScoringSink
{
    /// <summary>The batch being filled; set by the scoring stage.</summary>
    public OutputBatch? Current { get; set; }

    /// <summary>
    /// With grading deferred, the batch whose labels the grading stage is grading: its alerts
    /// and metric rows go there, while the scoring stage fills <see cref="Current"/>. Null
    /// sends everything to <see cref="Current"/>.
    /// </summary>
    public OutputBatch? Graded { get; set; }

    /// <inheritdoc />
    public void OnPrediction(in Prediction prediction) => Current!.Add(prediction);

    /// <inheritdoc />
    public void OnAlert(AlertTransition alert) => (Graded ?? Current)!.Alerts.Add(alert);

    /// <inheritdoc />
    public void OnMetrics(in MetricsRow row) => (Graded ?? Current)!.Metrics.Add(row);
}
