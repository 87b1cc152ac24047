using Driftline.Core.Detectors;

namespace Driftline.Core.Snapshots;

/// <summary>
/// The state of a loss detector (Page–Hinkley or ADWIN) in a snapshot: the counts every
/// detector has, plus its own running values in the order its <c>Export</c> gives them.
/// </summary>
internal sealed class DetectorSnapshot
{
    /// <summary>Values read since creation or the last reset.</summary>
    public long Count { get; set; }

    /// <summary>Changes signalled.</summary>
    public long Detections { get; set; }

    /// <summary>The state after the last value.</summary>
    public DetectorState State { get; set; }

    /// <summary>The detector's own running values (see the detector's <c>Export</c>).</summary>
    public double[] Values { get; set; } = [];
}
