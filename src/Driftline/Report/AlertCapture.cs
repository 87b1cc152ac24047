using Driftline.Core.Alerts;

namespace Driftline.Report;

/// <summary>An alert transition with the calibration of the window around it.</summary>
/// <param name="Alert">The transition.</param>
/// <param name="Before">The window that ended where the alerting window began (calm, if the alert is news); null when the run was younger than one window.</param>
/// <param name="At">The window the rule saw when it changed state.</param>
internal sealed record AlertCapture(AlertTransition Alert, BinsCapture? Before, BinsCapture At)
{
    /// <summary>The window one window-length after the alert (or the last one, when the run ended first); set later.</summary>
    public BinsCapture? After { get; set; }
}
