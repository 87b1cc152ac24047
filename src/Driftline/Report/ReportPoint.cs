namespace Driftline.Report;

/// <summary>The rolling measures at one moment of a run, as drawn in the report's charts over time.</summary>
/// <param name="Labels">Labels graded so far (the charts' x axis).</param>
/// <param name="Events">Events scored so far.</param>
/// <param name="WindowLabels">Labels in the rolling window now.</param>
/// <param name="LogLoss">The model's log-loss over the window.</param>
/// <param name="PriorLogLoss">The class-prior baseline's log-loss over the same window.</param>
/// <param name="CalibrationInTheLarge">Mean p − mean y over the window.</param>
/// <param name="Ece">Expected calibration error over the window.</param>
/// <param name="LateLabels">Late labels joined so far.</param>
/// <param name="ExpiredLabels">Predictions dropped unlabelled so far.</param>
/// <param name="Brier">Brier score over the window; NaN when not recorded.</param>
/// <param name="Auc">AUC over the window; NaN while it holds one class only or when not recorded.</param>
/// <param name="TimeTicks">Latest event time seen (UTC ticks), or <see cref="Core.Events.ParsedRecord.NoTime"/> when events carry none.</param>
/// <param name="RuleValues">Each rule's value at this moment, in <see cref="ReportData.Rules"/> order (what it compared with its thresholds); null when not recorded.</param>
/// <param name="ClassGaps">Multiclass: per class, mean p minus observed rate over the window; null for binary.</param>
/// <param name="ServedGap">With recalibration on: the served probabilities' mean p minus observed rate over the window; NaN otherwise.</param>
/// <param name="ServedLogLoss">With recalibration on: the served probabilities' log-loss over the window; NaN otherwise.</param>
internal readonly record struct ReportPoint(long Labels, long Events, int WindowLabels, double LogLoss, double PriorLogLoss,
    double CalibrationInTheLarge, double Ece, long LateLabels, long ExpiredLabels,
    double Brier = double.NaN, double Auc = double.NaN, long TimeTicks = Core.Events.ParsedRecord.NoTime, double[]? RuleValues = null,
    double[]? ClassGaps = null, double ServedGap = double.NaN, double ServedLogLoss = double.NaN);
