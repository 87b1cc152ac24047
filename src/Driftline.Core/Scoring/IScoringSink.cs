using Driftline.Core.Alerts;

namespace Driftline.Core.Scoring;

/// <summary>
/// Where the core's results go. The core calls it synchronously on its own thread; an
/// implementation buffers (the host's writers) and must not block for long.
/// </summary>
internal interface IScoringSink
{
    /// <summary>A probability for one event, in input order.</summary>
    void OnPrediction(in Prediction prediction);

    /// <summary>An alert raised or cleared.</summary>
    void OnAlert(AlertTransition alert);

    /// <summary>The measures every <c>Monitor:MetricsEvery</c> labels.</summary>
    void OnMetrics(in MetricsRow row);

    /// <summary>
    /// After each prediction (and its sink call), with <see cref="ScoringEngine.Position"/> as it
    /// was then and the measures graded up to it: on the scoring thread, or, with grading
    /// deferred, on the grading stage. For samples of the run that must fall at the same places
    /// whichever thread grades; nothing by default.
    /// </summary>
    void OnScored()
    {
    }
}
