using Driftline.Core.Alerts;

namespace Driftline.Report;

/// <summary>One alert rule as the report draws it: what it watched and the lines it raised and cleared at.</summary>
/// <param name="Name">Rule name.</param>
/// <param name="Metric">The measure watched.</param>
/// <param name="Severity">The rule's severity.</param>
/// <param name="Window">Labels in the rule's own window.</param>
/// <param name="Raise">The value at which it raises (for the sequential test, its evidence threshold).</param>
/// <param name="Clear">The value at which it clears.</param>
/// <param name="IsEvidence">True for the sequential calibration test, whose value is its evidence (a log-likelihood ratio).</param>
/// <param name="Description">What the value is, in words, for the chart's axis.</param>
/// <param name="Class">Multiclass: the class the rule watches against the rest; null for the whole model.</param>
internal sealed record ReportRule(string Name, AlertMetric Metric, AlertSeverity Severity, int Window, double Raise, double Clear,
    bool IsEvidence, string Description, string? Class = null)
{
    /// <summary>For the sequential test: labels between false alarms on a calibrated stream (per class, ARL0 × K); 0 otherwise.</summary>
    public double LabelsPerFalseAlarm { get; init; }

    /// <summary>The report's view of <paramref name="rule"/>; null for the loss change detectors, whose value is only a signal.</summary>
    public static ReportRule? Of(AlertRule rule)
    {
        ArgumentNullException.ThrowIfNull(rule);
        var o = rule.Options;
        if (rule.Cusum is { } cusum)
        {
            return new(o.Name, o.Metric, o.Severity, o.Window, cusum.Threshold, cusum.ClearFraction * cusum.Threshold, true,
                "evidence (log-likelihood ratio)") { LabelsPerFalseAlarm = o.LabelsPerFalseAlarm };
        }
        if (o.IsDetector)
        {
            return null;
        }
        string what = Words(o.Metric) + o.RelativeTo switch
        {
            AlertBaseline.Prior => " relative to the class prior",
            AlertBaseline.Reference => " relative to the reference period",
            _ => "",
        };
        return new(o.Name, o.Metric, o.Severity, o.Window, o.Raise, o.Clear, false, $"{what} over {o.Window:N0} labels");
    }

    private static string Words(AlertMetric metric) => metric switch
    {
        AlertMetric.CalibrationGap => "|mean p − observed rate|",
        AlertMetric.CalibrationInTheLarge => "mean p − observed rate",
        AlertMetric.LogLossOverPrior => "log-loss ÷ the prior's",
        AlertMetric.LogLoss => "log-loss",
        AlertMetric.Brier => "Brier score",
        AlertMetric.Ece => "calibration error (ECE)",
        AlertMetric.CalibrationZ => "|gap| in standard errors",
        AlertMetric.HosmerLemeshowP => "Hosmer–Lemeshow p-value",
        AlertMetric.Auc => "AUC",
        _ => Core.Events.RecordJson.MetricName(metric),
    };
}
