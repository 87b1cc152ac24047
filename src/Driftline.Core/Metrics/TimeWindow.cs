namespace Driftline.Core.Metrics;

/// <summary>
/// Log-loss, Brier score, expected calibration error, calibration-in-the-large and reliability
/// bins over the graded predictions of the last <see cref="Span"/> of event time.
/// </summary>
/// <remarks>
/// <para>
/// "Now" is the latest event time seen (<see cref="Latest"/>), moved by <see cref="Add(DateTimeOffset, double, int)"/> and
/// <see cref="AdvanceTo"/>; the window holds predictions with time in (Latest − Span, Latest].
/// Time never comes from a clock, so replay gives the same windows as the live run.
/// </para>
/// <para>
/// Times may arrive out of order (labels come late, partitions interleave): predictions are kept
/// in a heap ordered by time, then arrival, so eviction is always by timestamp and costs
/// O(log n). A prediction already older than the window when it arrives is refused
/// (<see cref="Add(DateTimeOffset, double, int)"/> returns false). Memory is bounded by <see cref="MaxCount"/>, allocated at
/// construction: in a burst the oldest predictions are evicted early, so the window then covers
/// less than <see cref="Span"/> (see <see cref="Count"/>). No allocation after construction.
/// </para>
/// <para>
/// Sums are exact (<see cref="FixedPoint"/>), as in <see cref="CalibrationWindow"/>; bins are
/// equal-width and left-closed, default 10. Not thread-safe.
/// </para>
/// </remarks>
internal sealed class TimeWindow : IGradedWindow
{
    private readonly PriorityQueue<GradedPrediction, Stamp> _held;
    private readonly CalibrationAccumulator _sums;
    private long _latestTicks;
    private bool _hasLatest;
    private long _arrivals;

    /// <summary>Creates an empty window.</summary>
    /// <param name="span">Length of event time covered; must be positive.</param>
    /// <param name="maxCount">Most predictions held at once, a memory bound; at least 1.</param>
    /// <param name="bins">Number of equal-width reliability bins; at least 1, default 10.</param>
    /// <exception cref="ArgumentOutOfRangeException">An argument is out of range.</exception>
    public TimeWindow(TimeSpan span, int maxCount, int bins = 10)
    {
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(span, TimeSpan.Zero);
        ArgumentOutOfRangeException.ThrowIfLessThan(maxCount, 1);
        _sums = new CalibrationAccumulator(new BinEdges(bins));
        Span = span;
        MaxCount = maxCount;
        _held = new PriorityQueue<GradedPrediction, Stamp>(maxCount);
    }

    private TimeWindow(TimeWindow source)
    {
        Span = source.Span;
        MaxCount = source.MaxCount;
        _sums = source._sums.Copy();
        _held = new PriorityQueue<GradedPrediction, Stamp>(source.MaxCount);
        _held.EnqueueRange(source._held.UnorderedItems);
        _latestTicks = source._latestTicks;
        _hasLatest = source._hasLatest;
        _arrivals = source._arrivals;
    }

    /// <summary>Length of event time covered.</summary>
    public TimeSpan Span { get; }

    /// <summary>Most predictions held at once.</summary>
    public int MaxCount { get; }

    /// <summary>Predictions held now.</summary>
    public int Count => _held.Count;

    /// <summary>Number of reliability bins.</summary>
    public int Bins => _sums.Edges.Bins;

    /// <summary>Latest event time seen, in UTC; null before the first <see cref="Add(DateTimeOffset, double, int)"/> or <see cref="AdvanceTo"/>.</summary>
    public DateTimeOffset? Latest => _hasLatest ? new DateTimeOffset(_latestTicks, TimeSpan.Zero) : null;

    /// <summary>Metric values over the predictions held; not ready (NaN values) while the window is empty. O(bins).</summary>
    public CalibrationSnapshot Current => _sums.Snapshot();

    /// <inheritdoc />
    public int Capacity => MaxCount;

    /// <inheritdoc />
    public double LogLoss => _sums.MeanLogLoss;

    /// <inheritdoc />
    public double CalibrationInTheLarge => _sums.CalibrationInTheLarge;

    /// <inheritdoc />
    public double CalibrationZ => _sums.CalibrationZ;

    /// <inheritdoc />
    public GradedPrediction[] Contents() => ToArray().Select(t => new GradedPrediction(t.P, t.Y)).ToArray();

    /// <summary>
    /// Adds a graded prediction with its event time, then evicts whatever the window no longer
    /// covers. A time later than <see cref="Latest"/> moves the window forward.
    /// </summary>
    /// <returns>
    /// True when the prediction is held; false when it was already older than the window
    /// (time ≤ Latest − Span), or the window is full of newer predictions. Nothing changes then
    /// except that <see cref="Latest"/> never moves backward.
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="p"/> is NaN, infinite or outside [0, 1], or <paramref name="y"/> is not 0 or 1;
    /// the window is unchanged.
    /// </exception>
    public bool Add(DateTimeOffset time, double p, int y) => Add(time, GradedTerms.Of(p, y, _sums.Edges));

    /// <summary>
    /// <see cref="Add(DateTimeOffset, double, int)"/> with the prediction's terms computed
    /// already over this window's bins (see <see cref="GradedTerms"/>).
    /// </summary>
    public bool Add(DateTimeOffset time, in GradedTerms terms)
    {
        long ticks = time.UtcTicks;
        Advance(ticks);
        if (ticks <= Horizon)
        {
            return false;
        }

        var stamp = new Stamp(ticks, _arrivals);
        if (_held.Count == MaxCount)
        {
            // Keep the newest MaxCount: a newcomer older than everything held is the one to go.
            _held.TryPeek(out _, out Stamp oldest);
            if (stamp.CompareTo(oldest) < 0)
            {
                return false;
            }

            GradedPrediction evicted = _held.Dequeue();
            _sums.Remove(evicted.P, evicted.Y);
        }

        _arrivals++;
        _held.Enqueue(terms.Prediction, stamp);
        _sums.Add(terms);
        return true;
    }

    /// <summary>
    /// Moves <see cref="Latest"/> to <paramref name="time"/> if that is later, evicting what falls
    /// out of the window; call it with the time of unlabelled events so a quiet label stream still
    /// ages out. An earlier time is ignored.
    /// </summary>
    public void AdvanceTo(DateTimeOffset time) => Advance(time.UtcTicks);

    /// <summary>
    /// Writes the reliability bins, in order, into the first <see cref="Bins"/> elements of
    /// <paramref name="destination"/>. Empty bins have count 0 and NaN means.
    /// </summary>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is shorter than <see cref="Bins"/>.</exception>
    public void CopyBins(Span<ReliabilityBin> destination) => _sums.CopyBins(destination);

    /// <summary>An independent copy; changes to one never reach the other.</summary>
    public TimeWindow Copy() => new(this);

    /// <summary>The predictions held, oldest first (by time, then arrival), for snapshots; see <see cref="Restore"/>.</summary>
    public TimedPrediction[] ToArray()
    {
        var items = new (Stamp Stamp, GradedPrediction Prediction)[_held.Count];
        int i = 0;
        foreach ((GradedPrediction prediction, Stamp stamp) in _held.UnorderedItems)
        {
            items[i++] = (stamp, prediction);
        }

        Array.Sort(items, static (a, b) => a.Stamp.CompareTo(b.Stamp));
        return Array.ConvertAll(items, static x => new TimedPrediction(
            new DateTimeOffset(x.Stamp.Ticks, TimeSpan.Zero), x.Prediction.P, x.Prediction.Y));
    }

    /// <summary>
    /// Rebuilds a window from <see cref="Latest"/> and <see cref="ToArray"/> of a saved one; the
    /// result behaves identically to the window they were taken from.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">A size is out of range, or a saved prediction is invalid.</exception>
    /// <exception cref="ArgumentException">
    /// <paramref name="contents"/> holds more than <paramref name="maxCount"/> predictions, is not
    /// oldest first, or holds a prediction the window would not cover at <paramref name="latest"/>.
    /// </exception>
    public static TimeWindow Restore(TimeSpan span, int maxCount, int bins, DateTimeOffset? latest,
        ReadOnlySpan<TimedPrediction> contents)
    {
        var window = new TimeWindow(span, maxCount, bins);
        if (contents.Length > maxCount)
        {
            throw new ArgumentException(
                $"Holds {contents.Length} predictions but the window keeps at most {maxCount}.", nameof(contents));
        }

        if (contents.Length > 0 && latest is null)
        {
            throw new ArgumentException("Saved predictions need the latest time they were held at.", nameof(latest));
        }

        if (latest is { } now)
        {
            window.Advance(now.UtcTicks);
        }

        for (int i = 0; i < contents.Length; i++)
        {
            TimedPrediction item = contents[i];
            if (i > 0 && item.Time < contents[i - 1].Time)
            {
                throw new ArgumentException("Saved predictions must be oldest first.", nameof(contents));
            }

            if (item.Time.UtcTicks > window._latestTicks || !window.Add(item.Time, item.P, item.Y))
            {
                throw new ArgumentException(
                    $"Saved prediction {i} at {item.Time:O} lies outside the window ending at {latest:O}.", nameof(contents));
            }
        }

        return window;
    }

    private long Horizon => _latestTicks - Span.Ticks;

    private void Advance(long ticks)
    {
        if (_hasLatest && ticks <= _latestTicks)
        {
            return;
        }

        _latestTicks = ticks;
        _hasLatest = true;
        long horizon = Horizon;
        while (_held.TryPeek(out GradedPrediction oldest, out Stamp stamp) && stamp.Ticks <= horizon)
        {
            _held.Dequeue();
            _sums.Remove(oldest.P, oldest.Y);
        }
    }

    /// <summary>Heap key: event time, then arrival order so equal times leave first-in, first-out.</summary>
    private readonly record struct Stamp(long Ticks, long Arrival) : IComparable<Stamp>
    {
        public int CompareTo(Stamp other) =>
            Ticks != other.Ticks ? Ticks.CompareTo(other.Ticks) : Arrival.CompareTo(other.Arrival);
    }
}
