using Driftline.Core.Metrics;

namespace Driftline.Report;

/// <summary>The reliability bins of the rolling window at one moment.</summary>
/// <param name="Labels">Labels graded when the bins were copied: the window ends at this label.</param>
/// <param name="Count">Labels in the window then, so it covers labels <c>Labels − Count + 1</c> to <c>Labels</c>.</param>
/// <param name="Bins">The bins, in order.</param>
/// <param name="Confusion">Multiclass: the whole run's observed × predicted counts at that moment (row-major); null for binary.</param>
internal sealed record BinsCapture(long Labels, int Count, ReliabilityBin[] Bins, long[]? Confusion = null)
{
    /// <summary>First label the window covers.</summary>
    public long FirstLabel => Labels - Count + 1;
}
