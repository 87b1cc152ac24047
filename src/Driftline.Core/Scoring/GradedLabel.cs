namespace Driftline.Core.Scoring;

/// <summary>One graded label as a challenger sees it.</summary>
/// <param name="Id">The labelled event's id.</param>
/// <param name="TimeTicks">Its event time, or no time.</param>
/// <param name="LogLoss">The whole model's log-loss on it (−ln of the probability given to what happened).</param>
internal readonly record struct GradedLabel(string Id, long TimeTicks, double LogLoss);
