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
internal readonly record struct ReportPoint(long Labels, long Events, int WindowLabels, double LogLoss, double PriorLogLoss,
    double CalibrationInTheLarge, double Ece, long LateLabels, long ExpiredLabels);
