namespace Driftline.Core.Alerts;

/// <summary>An alert raised or cleared.</summary>
/// <param name="Rule">Rule name.</param>
/// <param name="Raised">True when raised, false when cleared.</param>
/// <param name="Metric">The measure watched.</param>
/// <param name="Value">The measure's value when the state changed.</param>
/// <param name="Threshold">The threshold crossed (raise or clear).</param>
/// <param name="Window">Labels in the window.</param>
/// <param name="EventId">Id of the labelled event whose arrival triggered the change.</param>
/// <param name="TimeTicks">Event time of that label as UTC ticks, or no time.</param>
/// <param name="Labels">Labels graded so far in the run.</param>
/// <param name="Severity">The rule's severity.</param>
/// <param name="Explanation">What the window looks like when the state changed.</param>
/// <param name="RelativeTo">What the value is measured against.</param>
/// <param name="Break">For the sequential calibration test: the recalibration that best explains the labels, in words.</param>
/// <param name="Incident">The incident the transition belongs to (1, 2, …): a stretch with at least one rule raised; 0 when not known.</param>
/// <param name="Class">Multiclass: the class the rule watches one against the rest; null for the whole model.</param>
internal sealed record AlertTransition(string Rule, bool Raised, AlertMetric Metric, double Value, double Threshold,
    int Window, string EventId, long TimeTicks, long Labels, AlertSeverity Severity = AlertSeverity.Warning,
    AlertExplanation? Explanation = null, AlertBaseline RelativeTo = AlertBaseline.None, string? Break = null, string? Class = null, long Incident = 0);
