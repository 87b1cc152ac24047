namespace Driftline.Core.Detectors;

/// <summary>
/// What every change detector shares, whatever it reads (a loss value, or a probability and its
/// outcome): its state, how much it has seen, how many changes it has found, and a reset.
/// </summary>
/// <remarks>
/// Detectors are accumulators: O(1) or documented update cost, a copy for snapshots, and
/// <see cref="DetectorState.NotReady"/> instead of an exception on too little data. Non-finite
/// input is a bug upstream and throws <see cref="ArgumentOutOfRangeException"/>, leaving the
/// detector unchanged. Not thread-safe: one writer, as for every per-model state.
/// </remarks>
internal interface IChangeDetector
{
    /// <summary>The state after the last value; <see cref="DetectorState.NotReady"/> before any.</summary>
    DetectorState State { get; }

    /// <summary>Values accepted since creation or the last <see cref="Reset"/>.</summary>
    long Count { get; }

    /// <summary>Changes detected since creation or the last <see cref="Reset"/>; each change counts once.</summary>
    long Detections { get; }

    /// <summary>Forgets everything, as if newly created with the same settings.</summary>
    void Reset();

    /// <summary>An independent copy that continues exactly as the original would.</summary>
    IChangeDetector Copy();
}
