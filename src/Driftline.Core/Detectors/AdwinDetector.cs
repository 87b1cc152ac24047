namespace Driftline.Core.Detectors;

/// <summary>
/// ADWIN, the adaptive window of Bifet &amp; Gavaldà (2007), "Learning from time-changing data
/// with adaptive windowing", SIAM International Conference on Data Mining (SDM): it keeps the
/// longest recent window whose mean is consistent with a single value, and drops the older part
/// when two sub-windows' means differ by more than chance allows.
/// </summary>
/// <remarks>
/// <para>
/// The window is stored as the paper's exponential histogram (ADWIN2): buckets of 2ⁱ values,
/// at most <c>bucketsPerLevel</c> (M) per size, the two oldest of a size merged when one more
/// arrives. Memory and the cost of each value are O(M·log W) for a window of W values. Each
/// bucket keeps its count, mean and squared deviations, so the window's variance is exact.
/// </para>
/// <para>
/// After each value, every split of the window at a bucket boundary into an older W₀ (n₀
/// values) and a newer W₁ (n₁) is tested: a cut is made when |μ̂₀ − μ̂₁| ≥ ε, with the
/// paper's variance-based bound ε = √((2/m)·σ²·ln(2/δ′)) + (2/(3m))·ln(2/δ′), where
/// m = 1/(1/n₀ + 1/n₁), σ² is the window's variance and δ′ = δ/n for a window of n values.
/// While a cut exists the oldest bucket is dropped; a value that caused any drop returns
/// <see cref="DetectorState.Drift"/> (one detection). The window then holds only data after the change.
/// </para>
/// <para>
/// Defaults: δ = 0.002 (confidence), M = 5. Not ready while the window holds fewer than
/// <c>minCount</c> values (default 30), including just after a cut has shortened it.
/// </para>
/// </remarks>
internal sealed class AdwinDetector : ChangeDetector
{
    private readonly List<List<AdwinBucket>> _levels;

    /// <summary>Creates a detector with an empty window.</summary>
    /// <param name="delta">Confidence δ in (0, 1); smaller means fewer false cuts and later detection. Default 0.002.</param>
    /// <param name="bucketsPerLevel">M, buckets kept per size before merging; at least 2, default 5.</param>
    /// <param name="minCount">Window length below which no cut is tested; at least 2, default 30.</param>
    /// <exception cref="ArgumentOutOfRangeException">A setting is out of range.</exception>
    public AdwinDetector(double delta = 0.002, int bucketsPerLevel = 5, int minCount = 30)
    {
        if (!(delta > 0 && delta < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(delta), delta, "δ must lie strictly between 0 and 1.");
        }

        ArgumentOutOfRangeException.ThrowIfLessThan(bucketsPerLevel, 2);
        ArgumentOutOfRangeException.ThrowIfLessThan(minCount, 2);
        Delta = delta;
        BucketsPerLevel = bucketsPerLevel;
        MinCount = minCount;
        _levels = [];
    }

    private AdwinDetector(AdwinDetector source)
        : this(source.Delta, source.BucketsPerLevel, source.MinCount)
    {
        foreach (List<AdwinBucket> level in source._levels)
        {
            _levels.Add([.. level]);
        }

        Width = source.Width;
        Count = source.Count;
        Detections = source.Detections;
        State = source.State;
    }

    /// <summary>Confidence δ.</summary>
    public double Delta { get; }

    /// <summary>Buckets kept per size, M.</summary>
    public int BucketsPerLevel { get; }

    /// <summary>Window length below which no cut is tested.</summary>
    public int MinCount { get; }

    /// <summary>Values in the current window, W.</summary>
    public long Width { get; private set; }

    /// <summary>Mean of the current window; NaN when it is empty. O(M·log W).</summary>
    public double Mean => Width == 0 ? double.NaN : Total().Mean;

    /// <summary>Buckets held, for checking the O(M·log W) memory bound.</summary>
    public int Buckets => _levels.Sum(level => level.Count);

    /// <inheritdoc/>
    public override DetectorState Add(double value)
    {
        RequireFinite(value);
        Count++;
        Insert(value);
        if (Width < MinCount)
        {
            State = DetectorState.NotReady;
            return State;
        }

        bool cut = false;
        while (Width >= 2 && HasCut())
        {
            DropOldest();
            cut = true;
        }

        if (cut)
        {
            Detections++;
            State = DetectorState.Drift;
        }
        else
        {
            State = Width < MinCount ? DetectorState.NotReady : DetectorState.Stable;
        }

        return State;
    }

    /// <inheritdoc/>
    public override void Reset()
    {
        _levels.Clear();
        Width = 0;
        Count = 0;
        Detections = 0;
        State = DetectorState.NotReady;
    }

    /// <inheritdoc/>
    public override AdwinDetector Copy() => new(this);

    /// <summary>
    /// The width, then for each level its number of buckets followed by each bucket's count,
    /// mean and sum of squared deviations.
    /// </summary>
    protected override double[] ExportValues()
    {
        var values = new List<double> { Width, _levels.Count };
        foreach (List<AdwinBucket> level in _levels)
        {
            values.Add(level.Count);
            foreach (AdwinBucket b in level)
            {
                values.Add(b.Count);
                values.Add(b.Mean);
                values.Add(b.SquaredDeviations);
            }
        }
        return [.. values];
    }

    /// <inheritdoc/>
    protected override void ImportValues(double[] values)
    {
        int at = 0;
        // Reads one value, first checking that at least count values are left from here.
        double Next(int count)
        {
            if (at + count > values.Length)
            {
                throw new ArgumentException("an ADWIN state ends before its last bucket", nameof(values));
            }
            return values[at++];
        }

        long width = (long)Next(2);
        int levels = (int)Next(1);
        var restored = new List<List<AdwinBucket>>(levels);
        for (int l = 0; l < levels; l++)
        {
            int buckets = (int)Next(1);
            var level = new List<AdwinBucket>(buckets);
            for (int b = 0; b < buckets; b++)
            {
                long count = (long)Next(3);
                level.Add(new AdwinBucket(count, Next(2), Next(1)));
            }
            restored.Add(level);
        }
        if (at != values.Length)
        {
            throw new ArgumentException($"an ADWIN state of {levels} levels has {at} values, not {values.Length}", nameof(values));
        }
        _levels.Clear();
        _levels.AddRange(restored);
        Width = width;
    }

    private void Insert(double value)
    {
        if (_levels.Count == 0)
        {
            _levels.Add([]);
        }

        _levels[0].Add(new AdwinBucket(1, value, 0));
        Width++;
        for (int i = 0; i < _levels.Count && _levels[i].Count > BucketsPerLevel; i++)
        {
            // Within a level buckets run oldest first, and every bucket of level i + 1 is older
            // than every bucket of level i, so the merged pair goes to the newest end of i + 1.
            AdwinBucket merged = AdwinBucket.Merge(_levels[i][0], _levels[i][1]);
            _levels[i].RemoveRange(0, 2);
            if (i + 1 == _levels.Count)
            {
                _levels.Add([]);
            }

            _levels[i + 1].Add(merged);
        }
    }

    private void DropOldest()
    {
        int top = _levels.Count - 1;
        Width -= _levels[top][0].Count;
        _levels[top].RemoveAt(0);
        while (_levels.Count > 0 && _levels[^1].Count == 0)
        {
            _levels.RemoveAt(_levels.Count - 1);
        }
    }

    private AdwinBucket Total()
    {
        var total = new AdwinBucket(0, 0, 0);
        bool any = false;
        for (int i = _levels.Count - 1; i >= 0; i--)
        {
            foreach (AdwinBucket bucket in _levels[i])
            {
                total = any ? AdwinBucket.Merge(total, bucket) : bucket;
                any = true;
            }
        }

        return total;
    }

    private bool HasCut()
    {
        AdwinBucket total = Total();
        long n = total.Count;
        double variance = total.SquaredDeviations / n;
        double logTerm = Math.Log(2.0 * n / Delta);
        double sum = total.Mean * n;

        long n0 = 0;
        double sum0 = 0;
        for (int i = _levels.Count - 1; i >= 0; i--)
        {
            List<AdwinBucket> level = _levels[i];
            for (int j = 0; j < level.Count; j++)
            {
                n0 += level[j].Count;
                sum0 += level[j].Mean * level[j].Count;
                long n1 = n - n0;
                if (n1 == 0)
                {
                    return false;
                }

                double gap = Math.Abs((sum0 / n0) - ((sum - sum0) / n1));
                double m = 1.0 / ((1.0 / n0) + (1.0 / n1));
                double epsilon = Math.Sqrt(2.0 / m * variance * logTerm) + (2.0 / (3.0 * m) * logTerm);
                if (gap >= epsilon)
                {
                    return true;
                }
            }
        }

        return false;
    }
}
