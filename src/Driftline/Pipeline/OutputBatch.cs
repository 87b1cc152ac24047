using Driftline.Core.Alerts;
using Driftline.Core.Scoring;

namespace Driftline.Pipeline;

/// <summary>
/// What the scoring stage produced for one input batch, handed to the writer stage: the
/// predictions as values (formatting happens in the writer, on the other core) plus the rare
/// alerts, metric rows and dead letters.
/// </summary>
internal sealed class OutputBatch
{
    private Prediction[] _predictions = new Prediction[LineBatch.MaxLines];

    /// <summary>Predictions, in input order.</summary>
    public ReadOnlySpan<Prediction> Predictions => _predictions.AsSpan(0, PredictionCount);

    /// <summary>Number of predictions.</summary>
    public int PredictionCount { get; private set; }

    /// <summary>Alerts raised or cleared.</summary>
    public List<AlertTransition> Alerts { get; } = [];

    /// <summary>Metric rows.</summary>
    public List<MetricsRow> Metrics { get; } = [];

    /// <summary>Rejected records.</summary>
    public List<DeadLetter> DeadLetters { get; } = [];

    /// <summary>With grading deferred: the labels the scoring stage left for the grading stage.</summary>
    public GradingLog Grading { get; } = new();

    /// <summary>Empties the batch, keeping its buffers.</summary>
    public void Clear()
    {
        Grading.Clear();
        PredictionCount = 0;
        Alerts.Clear();
        Metrics.Clear();
        DeadLetters.Clear();
    }

    /// <summary>Adds a prediction.</summary>
    public void Add(in Prediction prediction)
    {
        if (PredictionCount == _predictions.Length)
        {
            Array.Resize(ref _predictions, PredictionCount * 2);
        }
        _predictions[PredictionCount++] = prediction;
    }
}
