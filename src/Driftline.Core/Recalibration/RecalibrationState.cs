using System.Text.Json.Serialization;

namespace Driftline.Core.Recalibration;

/// <summary>
/// Everything an <see cref="IRecalibration"/> needs to continue exactly where it stopped:
/// the fitted parameters, the forgotten curvature of past labels, and the count graded.
/// </summary>
/// <param name="Intercept">Fitted a (vector scaling: the first class's a_0).</param>
/// <param name="Slope">Fitted b (vector scaling: the first class's b_0).</param>
/// <param name="Curvature">
/// The past labels' decayed Hessian: binary [h_aa, h_ab, h_bb]; vector scaling the full
/// 2K × 2K matrix row by row over (a_0 … a_{K−1}, b_0 … b_{K−1}).
/// </param>
/// <param name="Labels">Labels graded so far.</param>
/// <param name="Engaged">Whether a raise has switched the correction on (for <see cref="RecalibrationMode.OnAlert"/>; always true for Always).</param>
/// <param name="ClearStreak">Labels graded since the model's calibration rules were last raised.</param>
/// <param name="Intercepts">Vector scaling: every class's a_k; null for the binary correction.</param>
/// <param name="Slopes">Vector scaling: every class's b_k; null for the binary correction.</param>
internal sealed record RecalibrationState(
    double Intercept,
    double Slope,
    double[] Curvature,
    long Labels,
    bool Engaged,
    long ClearStreak,
    [property: JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)] double[]? Intercepts = null,
    [property: JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)] double[]? Slopes = null);
