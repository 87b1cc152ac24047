using Driftline.Core.Alerts;
using Driftline.Core.Scoring;

namespace Driftline.Pipeline;

/// <summary>Collects the core's results into the current <see cref="OutputBatch"/>.</summary>
internal sealed class BatchSink : IScoringSink
{
    /// <summary>The batch being filled; set by the scoring stage.</summary>
    public OutputBatch? Current { get; set; }

    /// <inheritdoc />
    public void OnPrediction(in Prediction prediction) => Current!.Add(prediction);

    /// <inheritdoc />
    public void OnAlert(AlertTransition alert) => Current!.Alerts.Add(alert);

    /// <inheritdoc />
    public void OnMetrics(in MetricsRow row) => Current!.Metrics.Add(row);
}
