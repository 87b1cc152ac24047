namespace Driftline.Core.Detectors;

/// <summary>What a change detector concludes after a value.</summary>
internal enum DetectorState
{
    /// <summary>
    /// Too little data since the start (or the last restart) to decide; the detector keeps
    /// accumulating but cannot signal yet. Each detector documents its minimum.
    /// </summary>
    NotReady,

    /// <summary>No evidence of a change.</summary>
    Stable,

    /// <summary>
    /// A change is detected. Loss detectors report it on the one value that completed the
    /// evidence and then restart or shrink; a detector that holds an alarm reports it on every
    /// value until the alarm clears. <see cref="IChangeDetector.Detections"/> counts each change once.
    /// </summary>
    Drift,
}
