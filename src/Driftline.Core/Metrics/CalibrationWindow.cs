using System.Runtime.CompilerServices;

namespace Driftline.Core.Metrics;

/// <summary>
/// Log-loss, Brier score, expected calibration error, calibration-in-the-large and reliability
/// bins over the last <see cref="Capacity"/> graded predictions.
/// </summary>
/// <remarks>
/// <para>
/// Each <see cref="Add(double, int)"/> is O(1) and allocates nothing: the predictions live in a ring buffer
/// allocated once, and the metrics come from running sums that the oldest prediction is
/// subtracted from when it is evicted. The sums are exact (<see cref="FixedPoint"/>), so there is
/// no drift however long the window runs, and a window restored from <see cref="ToArray"/>
/// continues identically to the one it was saved from.
/// </para>
/// <para>
/// Reliability bins are equal-width and left-closed (<see cref="BinEdges.LeftClosedIndex"/>),
/// default 10. Not thread-safe: one writer, as for every per-model state.
/// </para>
/// </remarks>
internal sealed class CalibrationWindow : IGradedWindow
{
    private readonly GradedTerms[] _ring;
    private readonly CalibrationAccumulator _sums;
    private int _oldest;
    private int _count;

    /// <summary>Creates an empty window.</summary>
    /// <param name="capacity">Number of most recent predictions kept; at least 1.</param>
    /// <param name="bins">Number of equal-width reliability bins; at least 1, default 10.</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="capacity"/> or <paramref name="bins"/> is less than 1.</exception>
    public CalibrationWindow(int capacity, int bins = 10)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        _sums = new CalibrationAccumulator(new BinEdges(bins));
        _ring = new GradedTerms[capacity];
    }

    private CalibrationWindow(CalibrationWindow source)
    {
        _ring = (GradedTerms[])source._ring.Clone();
        _sums = source._sums.Copy();
        _oldest = source._oldest;
        _count = source._count;
    }

    /// <summary>Most predictions the window holds.</summary>
    public int Capacity => _ring.Length;

    /// <summary>Predictions held now, from 0 up to <see cref="Capacity"/>.</summary>
    public int Count => _count;

    /// <summary>Number of reliability bins.</summary>
    public int Bins => _sums.Edges.Bins;

    /// <summary>True once the window has held <see cref="Capacity"/> predictions; from then on each add evicts one.</summary>
    public bool IsFull => _count == _ring.Length;

    /// <summary>Metric values over the predictions held; not ready (NaN values) while the window is empty. O(bins).</summary>
    public CalibrationSnapshot Current => _sums.Snapshot();

    /// <summary>Mean log-loss over the window in O(1) (as <see cref="Current"/>); NaN when empty.</summary>
    public double LogLoss => _sums.MeanLogLoss;

    /// <inheritdoc />
    public GradedPrediction[] Contents() => ToArray();

    /// <summary>Calibration-in-the-large in standard errors, O(1) (see <see cref="CalibrationAccumulator.CalibrationZ"/>).</summary>
    public double CalibrationZ => _sums.CalibrationZ;

    /// <summary>Mean p − mean y over the window in O(1) (as <see cref="Current"/>); NaN when empty.</summary>
    public double CalibrationInTheLarge => _sums.CalibrationInTheLarge;

    /// <summary>Adds a graded prediction, evicting the oldest when the window is full.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="p"/> is NaN, infinite or outside [0, 1], or <paramref name="y"/> is not 0 or 1;
    /// the window is unchanged.
    /// </exception>
    public void Add(double p, int y) => Add(GradedTerms.Of(p, y, _sums.Edges));

    /// <summary>
    /// Adds a graded prediction's terms (computed over this window's bins, see
    /// <see cref="GradedTerms"/>), evicting the oldest when the window is full. The same as
    /// <see cref="Add(double, int)"/> with the terms' p and y, without computing them again.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Add(in GradedTerms terms)
    {
        if (_count == _ring.Length)
        {
            // Full: the oldest leaves as this one comes, in one pass over the sums.
            _sums.Replace(_ring[_oldest], terms);
            _ring[_oldest] = terms;
            _oldest = _oldest + 1 == _ring.Length ? 0 : _oldest + 1;
            return;
        }

        int slot = _oldest + _count;
        _ring[slot >= _ring.Length ? slot - _ring.Length : slot] = terms;
        _count++;
        _sums.Add(terms);
    }

    /// <summary>Empties the window; capacity and bins are kept.</summary>
    public void Clear()
    {
        _sums.Clear();
        _oldest = 0;
        _count = 0;
    }

    /// <summary>
    /// Writes the reliability bins, in order, into the first <see cref="Bins"/> elements of
    /// <paramref name="destination"/>. Empty bins have count 0 and NaN means.
    /// </summary>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is shorter than <see cref="Bins"/>.</exception>
    public void CopyBins(Span<ReliabilityBin> destination) => _sums.CopyBins(destination);

    /// <summary>An independent copy; changes to one never reach the other.</summary>
    public CalibrationWindow Copy() => new(this);

    /// <summary>The predictions held, oldest first, for snapshots; feed them to <see cref="Restore"/>.</summary>
    public GradedPrediction[] ToArray()
    {
        var result = new GradedPrediction[_count];
        for (int i = 0; i < _count; i++)
        {
            int slot = _oldest + i;
            result[i] = _ring[slot >= _ring.Length ? slot - _ring.Length : slot].Prediction;
        }
        return result;
    }

    /// <summary>
    /// Rebuilds a window from saved contents, oldest first. The result is identical, bit for bit,
    /// to the window <paramref name="contents"/> was taken from.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="capacity"/> or <paramref name="bins"/> is less than 1, or a saved prediction is invalid.
    /// </exception>
    /// <exception cref="ArgumentException"><paramref name="contents"/> holds more than <paramref name="capacity"/> predictions.</exception>
    public static CalibrationWindow Restore(int capacity, int bins, ReadOnlySpan<GradedPrediction> contents)
    {
        var window = new CalibrationWindow(capacity, bins);
        if (contents.Length > capacity)
        {
            throw new ArgumentException(
                $"Holds {contents.Length} predictions but the window keeps at most {capacity}.", nameof(contents));
        }

        foreach (GradedPrediction item in contents)
        {
            window.Add(item.P, item.Y);
        }

        return window;
    }
}
