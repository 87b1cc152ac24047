using Driftline.Core.Alerts;
using Driftline.Core.Scoring;

namespace Driftline.Core.Tests.Scoring;

/// <summary>Keeps everything the engine emits, for assertions.</summary>
internal sealed class RecordingSink : IScoringSink
{
    public List<Prediction> Predictions { get; } = [];

    public List<AlertTransition> Alerts { get; } = [];

    public List<MetricsRow> Metrics { get; } = [];

    public void OnPrediction(in Prediction prediction) => Predictions.Add(prediction);

    public void OnAlert(AlertTransition alert) => Alerts.Add(alert);

    public void OnMetrics(in MetricsRow row) => Metrics.Add(row);
}
