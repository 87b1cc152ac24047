using Driftline.Core.Metrics;

namespace Driftline.Core.Scoring;

/// <summary>The measures at one moment of a run, reported every <c>Monitor:MetricsEvery</c> labels.</summary>
/// <param name="Events">Events scored so far.</param>
/// <param name="Labels">Labels graded so far.</param>
/// <param name="TimeTicks">Event time of the latest label, or no time.</param>
/// <param name="Window">The model over the rolling window.</param>
/// <param name="PriorWindow">The class-prior baseline over the same window.</param>
/// <param name="Total">The model over the whole run.</param>
/// <param name="PriorTotal">The baseline over the whole run.</param>
/// <param name="LateLabels">Late labels joined so far.</param>
/// <param name="ExpiredLabels">Predictions dropped unlabelled so far.</param>
/// <param name="Classes">Multiclass: each class against the rest over the window; null for binary.</param>
/// <param name="ClassWiseEce">Multiclass: the class-wise ECE over the window; NaN for binary.</param>
/// <param name="Served">With recalibration on: the served probabilities over the window; null otherwise.</param>
/// <remarks>For a multiclass model the snapshots hold the measures of <see cref="ScoringEngine.Measures"/>.</remarks>
internal readonly record struct MetricsRow(long Events, long Labels, long TimeTicks, CalibrationSnapshot Window,
    CalibrationSnapshot PriorWindow, CalibrationSnapshot Total, CalibrationSnapshot PriorTotal, long LateLabels, long ExpiredLabels,
    IReadOnlyList<ClassMeasures>? Classes = null, double ClassWiseEce = double.NaN, CalibrationSnapshot? Served = null);
