namespace Driftline.Core.Metrics;

/// <summary>
/// Whole-run log-loss, Brier score, expected calibration error, calibration-in-the-large and
/// reliability bins: the same measures as <see cref="CalibrationWindow"/>, with nothing evicted.
/// </summary>
/// <remarks>
/// O(1) per <see cref="Add(double, int)"/>, no allocation, and no stored predictions, so memory stays constant
/// however long the run. The sums are exact (<see cref="FixedPoint"/>) and save to a
/// <see cref="CalibrationTotalsState"/> that restores bit for bit. Counts beyond
/// <see cref="int.MaxValue"/> are fine; only <see cref="CalibrationSnapshot.Count"/> saturates.
/// Bins are equal-width and left-closed, default 10. Not thread-safe.
/// </remarks>
internal sealed class CalibrationTotals
{
    private readonly CalibrationAccumulator _sums;

    /// <summary>Creates empty totals.</summary>
    /// <param name="bins">Number of equal-width reliability bins; at least 1, default 10.</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="bins"/> is less than 1.</exception>
    public CalibrationTotals(int bins = 10) => _sums = new CalibrationAccumulator(new BinEdges(bins));

    private CalibrationTotals(CalibrationAccumulator sums) => _sums = sums;

    /// <summary>Graded predictions counted so far (not saturated, unlike the snapshot's count).</summary>
    public long Count => _sums.Count;

    /// <summary>Number of reliability bins.</summary>
    public int Bins => _sums.Edges.Bins;

    /// <summary>Metric values over everything added; not ready (NaN values) before the first add. O(bins).</summary>
    public CalibrationSnapshot Current => _sums.Snapshot();

    /// <summary>Counts a graded prediction.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="p"/> is NaN, infinite or outside [0, 1], or <paramref name="y"/> is not 0 or 1;
    /// the totals are unchanged.
    /// </exception>
    public void Add(double p, int y)
    {
        PredictionScores.Validate(p, y);
        _sums.Add(p, y);
    }

    /// <summary>Counts a graded prediction whose terms are computed already (over the same bins).</summary>
    public void Add(in GradedTerms terms) => _sums.Add(terms);

    /// <summary>
    /// Writes the reliability bins, in order, into the first <see cref="Bins"/> elements of
    /// <paramref name="destination"/>. Empty bins have count 0 and NaN means.
    /// </summary>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is shorter than <see cref="Bins"/>.</exception>
    public void CopyBins(Span<ReliabilityBin> destination) => _sums.CopyBins(destination);

    /// <summary>An independent copy; changes to one never reach the other.</summary>
    public CalibrationTotals Copy() => new(_sums.Copy());

    /// <summary>The running sums, for snapshots; the arrays are copies the caller may keep.</summary>
    public CalibrationTotalsState ToState() => _sums.ToState();

    /// <summary>Rebuilds totals from a saved state; the result continues exactly as the saved totals would have.</summary>
    /// <exception cref="ArgumentNullException"><paramref name="state"/> is null.</exception>
    /// <exception cref="ArgumentException">The state's sums contradict each other; the message says how.</exception>
    public static CalibrationTotals Restore(CalibrationTotalsState state) => new(CalibrationAccumulator.FromState(state));
}
