namespace Driftline.Core.Metrics;

/// <summary>Metric values of a window, or of whole-run totals, at one moment.</summary>
/// <param name="Count">
/// Number of graded predictions the values cover. Whole-run totals beyond
/// <see cref="int.MaxValue"/> report <see cref="int.MaxValue"/> here; their exact count is
/// <see cref="CalibrationTotals.Count"/>.
/// </param>
/// <param name="LogLoss">Mean negative log-likelihood, natural log, p clipped as in <see cref="PredictionScores.LogLoss"/>.</param>
/// <param name="Brier">Brier score, mean (p − y)².</param>
/// <param name="Ece">Expected calibration error over the equal-width, left-closed bins of the source.</param>
/// <param name="MeanP">Mean predicted probability.</param>
/// <param name="MeanY">Observed rate of positives.</param>
/// <param name="CalibrationInTheLarge">
/// <c>MeanP − MeanY</c>: positive when the model over-predicts the positive class on average.
/// </param>
/// <remarks>When <paramref name="Count"/> is 0 every value is <see cref="double.NaN"/> and <see cref="IsReady"/> is false.</remarks>
internal readonly record struct CalibrationSnapshot(int Count, double LogLoss, double Brier, double Ece,
    double MeanP, double MeanY, double CalibrationInTheLarge)
{
    /// <summary>The snapshot for no data: count 0, every value NaN.</summary>
    public static CalibrationSnapshot Empty { get; } =
        new(0, double.NaN, double.NaN, double.NaN, double.NaN, double.NaN, double.NaN);

    /// <summary>True when at least one graded prediction is covered, so the values are numbers.</summary>
    public bool IsReady => Count > 0;
}
