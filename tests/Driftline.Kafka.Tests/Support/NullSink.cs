using Driftline.Core.Alerts;
using Driftline.Core.Scoring;

namespace Driftline.Kafka.Tests.Support;

/// <summary>A sink that drops everything, for engines whose outputs a test does not read.</summary>
internal sealed class NullSink : IScoringSink
{
    public void OnPrediction(in Prediction prediction)
    {
    }

    public void OnAlert(AlertTransition alert)
    {
    }

    public void OnMetrics(in MetricsRow row)
    {
    }
}
