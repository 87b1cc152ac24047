namespace Driftline.Core.Recalibration;

/// <summary>
/// Everything a <see cref="LogOddsRecalibration"/> needs to continue exactly where it stopped:
/// the fitted pair, the forgotten curvature of past labels, and the count graded.
/// </summary>
/// <param name="Intercept">Fitted a.</param>
/// <param name="Slope">Fitted b.</param>
/// <param name="Curvature">The past labels' decayed Hessian, [h_aa, h_ab, h_bb].</param>
/// <param name="Labels">Labels graded so far.</param>
/// <param name="Engaged">Whether a raise has switched the correction on (for <see cref="RecalibrationMode.OnAlert"/>; always true for Always).</param>
/// <param name="ClearStreak">Labels graded since the model's calibration rules were last raised.</param>
internal sealed record RecalibrationState(
    double Intercept,
    double Slope,
    double[] Curvature,
    long Labels,
    bool Engaged,
    long ClearStreak);
