namespace Driftline.Core.Metrics;

/// <summary>Result of a logistic recalibration fit, y ~ a + b · logit(p).</summary>
/// <param name="Status">Whether the fit has numbers; anything but <see cref="CalibrationFitStatus.Ready"/> means not ready.</param>
/// <param name="Count">Predictions the fit used.</param>
/// <param name="Intercept">
/// a: the recalibrated log-odds where the model says p = 0.5 (logit 0). 0 for well-calibrated
/// probabilities, positive when positives are more common there than predicted.
/// <see cref="double.NaN"/> when not ready.
/// </param>
/// <param name="Slope">
/// b: 1 for well-calibrated probabilities, below 1 when they are too extreme (overfitting), above 1
/// when too timid. <see cref="double.NaN"/> when not ready.
/// </param>
/// <param name="Iterations">Newton steps taken; 0 when not ready for a reason found before fitting.</param>
internal readonly record struct CalibrationFit(CalibrationFitStatus Status, int Count, double Intercept, double Slope, int Iterations)
{
    /// <summary>True when <see cref="Intercept"/> and <see cref="Slope"/> are estimates.</summary>
    public bool IsReady => Status == CalibrationFitStatus.Ready;

    /// <summary>A not-ready result with NaN estimates.</summary>
    public static CalibrationFit NotReady(CalibrationFitStatus status, int count, int iterations = 0) =>
        new(status, count, double.NaN, double.NaN, iterations);
}
