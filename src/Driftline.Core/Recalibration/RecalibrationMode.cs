namespace Driftline.Core.Recalibration;

/// <summary>When the served probability is the recalibrated one.</summary>
internal enum RecalibrationMode
{
    /// <summary>Never: predictions carry the model's own probability only (the default).</summary>
    Off,

    /// <summary>Always: every prediction is served through the fitted correction.</summary>
    Always,

    /// <summary>
    /// From the moment a calibration rule raises until that model's calibration rules have been
    /// clear for <see cref="RecalibrationOptions.ClearLabels"/> graded labels; identity otherwise.
    /// </summary>
    OnAlert,
}
