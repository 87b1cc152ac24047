using Driftline.Core.Metrics;

namespace Driftline.Core.Scoring;

/// <summary>
/// A rolling count window per segment (the value of <c>Monitor:SegmentBy</c>), so an alert can
/// say which segments are furthest off. Bounded: beyond <c>Monitor:MaxSegments</c> distinct
/// values, the rest share one "(other)" window.
/// </summary>
internal sealed class SegmentTracker(int window, int maxSegments)
{
    /// <summary>Name of the pooled segment.</summary>
    public const string Other = "(other)";

    // Segment windows report calibration-in-the-large and its z-score; their bins are unused.
    private const int CalibrationWindowBins = 10;

    private readonly Dictionary<string, CalibrationWindow> _windows = new(StringComparer.Ordinal);

    /// <summary>Adds a graded prediction to its segment's window; no segment, nothing.</summary>
    public void Add(string? segment, double p, int y)
    {
        if (segment is null)
        {
            return;
        }
        if (!_windows.TryGetValue(segment, out var w))
        {
            if (_windows.Count >= maxSegments)
            {
                segment = Other;
            }
            if (!_windows.TryGetValue(segment, out w))
            {
                w = new CalibrationWindow(window, CalibrationWindowBins);
                _windows.Add(segment, w);
            }
        }
        w.Add(p, y);
    }

    /// <summary>Every segment's window contents, in the order the segments first appeared (for snapshots).</summary>
    public List<Snapshots.SegmentSnapshot> Export() =>
        _windows.Select(kv => new Snapshots.SegmentSnapshot { Name = kv.Key, Contents = kv.Value.ToArray() }).ToList();

    /// <summary>Restores what <see cref="Export"/> gave, into a tracker that has seen nothing yet.</summary>
    public void Import(IEnumerable<Snapshots.SegmentSnapshot> segments)
    {
        ArgumentNullException.ThrowIfNull(segments);
        foreach (var s in segments)
        {
            _windows[s.Name] = CalibrationWindow.Restore(window, CalibrationWindowBins, s.Contents);
        }
    }

    /// <summary>
    /// Up to <paramref name="count"/> segments whose calibration gap is largest in standard
    /// errors (so a small segment needs a bigger gap to rank), furthest off first.
    /// </summary>
    public IReadOnlyList<SegmentGap> Worst(int count = 3) => _windows
        .Where(kv => kv.Value.Count >= 30 && double.IsFinite(kv.Value.CalibrationZ))
        .OrderByDescending(kv => Math.Abs(kv.Value.CalibrationZ))
        .Take(count)
        .Select(kv =>
        {
            var s = kv.Value.Current;
            return new SegmentGap(kv.Key, s.Count, s.MeanP, s.MeanY, kv.Value.CalibrationZ);
        })
        .ToList();
}

/// <summary>One segment's calibration over its window.</summary>
/// <param name="Segment">The segment's value.</param>
/// <param name="Count">Labels in its window.</param>
/// <param name="MeanP">Mean predicted probability.</param>
/// <param name="ObservedRate">Observed rate of positives.</param>
/// <param name="Z">Calibration gap in standard errors (positive: over-predicting).</param>
internal readonly record struct SegmentGap(string Segment, int Count, double MeanP, double ObservedRate, double Z);
