namespace Driftline.AlertQuality;

/// <summary>A calibration break: after it the true log-odds are <see cref="Shift"/> + <see cref="Slope"/> · logit p.</summary>
/// <param name="Name">Label in the printed table.</param>
/// <param name="Shift">Added to the claimed log-odds.</param>
/// <param name="Slope">Multiplies the claimed log-odds.</param>
/// <param name="Required">True for the two breaks issue 5 sets targets on; false for extra, off-grid checks.</param>
internal sealed record BreakScenario(string Name, double Shift, double Slope, bool Required);
