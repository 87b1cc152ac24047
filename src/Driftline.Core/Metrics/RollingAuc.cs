namespace Driftline.Core.Metrics;

/// <summary>
/// The area under the ROC curve over the last <see cref="Capacity"/> graded predictions, kept
/// exactly as predictions arrive and leave.
/// </summary>
/// <remarks>
/// <para>
/// AUC is the Mann–Whitney statistic over positive–negative pairs: a pair counts 1 when the
/// positive scores higher, ½ when the scores are equal (Mann &amp; Whitney 1947, "On a test of
/// whether one of two random variables is stochastically larger than the other", Annals of
/// Mathematical Statistics 18, 50–60; Hanley &amp; McNeil 1982, "The meaning and use of the area
/// under a receiver operating characteristic (ROC) curve", Radiology 143, 29–36).
/// </para>
/// <para>
/// Each add (and the eviction it causes) changes the pair count by the arriving prediction's own
/// pairs: for a positive, the negatives below it plus half those at its score; for a negative,
/// the positives above plus half those at its score. Those ranks come from an order-statistics
/// tree over the exact scores (<see cref="ScoreRankTree"/>), so an add is O(log N) expected and
/// allocates nothing. The count is kept in half-pairs as an integer, so the value is exact and
/// identical to a from-scratch computation over the same window, however long it runs.
/// </para>
/// <para>Not ready (NaN) while the window lacks a positive or a negative. Not thread-safe.</para>
/// </remarks>
internal sealed class RollingAuc
{
    private readonly GradedPrediction[] _ring;
    private readonly ScoreRankTree _tree;
    private int _oldest;
    private int _count;
    private long _halfPairs;
    private long _positives;

    /// <summary>Creates an empty window.</summary>
    /// <param name="capacity">Number of most recent predictions kept; at least 1.</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="capacity"/> is less than 1.</exception>
    public RollingAuc(int capacity)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        _ring = new GradedPrediction[capacity];
        _tree = new ScoreRankTree(capacity);
    }

    private RollingAuc(RollingAuc source)
    {
        _ring = (GradedPrediction[])source._ring.Clone();
        _tree = source._tree.Copy();
        _oldest = source._oldest;
        _count = source._count;
        _halfPairs = source._halfPairs;
        _positives = source._positives;
    }

    /// <summary>Most predictions the window holds.</summary>
    public int Capacity => _ring.Length;

    /// <summary>Predictions held now.</summary>
    public int Count => _count;

    /// <summary>Positives held now.</summary>
    public long Positives => _positives;

    /// <summary>Negatives held now.</summary>
    public long Negatives => _count - _positives;

    /// <summary>Twice the Mann–Whitney U over the window: pairs ranked right count 2, tied pairs 1.</summary>
    public long HalfPairs => _halfPairs;

    /// <summary>The AUC in [0, 1]; NaN (not ready) unless the window holds at least one positive and one negative.</summary>
    public double Value => _positives == 0 || _positives == _count ? double.NaN : _halfPairs / (2.0 * _positives * (_count - _positives));

    /// <summary>Adds a graded prediction, evicting the oldest when the window is full. O(log N) expected.</summary>
    /// <exception cref="ArgumentOutOfRangeException">p is NaN, infinite or outside [0, 1], or y is not 0 or 1; the window is unchanged.</exception>
    public void Add(double p, int y)
    {
        PredictionScores.Validate(p, y);
        if (_count == _ring.Length)
        {
            GradedPrediction evicted = _ring[_oldest];
            (int evictedBelow, int evictedAt) = _tree.RemoveAndRank(evicted.P, evicted.Y);
            _halfPairs -= PairsWithOthers(evicted.Y, evictedBelow, evictedAt);
            _positives -= evicted.Y;
            _ring[_oldest] = new GradedPrediction(p, y);
            _oldest = _oldest + 1 == _ring.Length ? 0 : _oldest + 1;
        }
        else
        {
            int slot = _oldest + _count;
            _ring[slot >= _ring.Length ? slot - _ring.Length : slot] = new GradedPrediction(p, y);
            _count++;
        }

        // The rank comes from the insert's own walk, taken before the new pair is counted.
        (int below, int at) = _tree.AddAndRank(p, y);
        _halfPairs += PairsWithOthers(y, below, at);
        _positives += y;
    }

    /// <summary>
    /// The AUC of <paramref name="predictions"/> computed at once: the value a window holding
    /// exactly them gives, bit for bit (the same integer count of half-pairs over the same
    /// divisor), in O(N log N) by one sort instead of N tree inserts. NaN (not ready) unless
    /// there is at least one positive and one negative.
    /// </summary>
    /// <remarks>
    /// After sorting by score, each run of equal scores with g₁ positives and g₀ negatives adds
    /// 2·g₁·(negatives below the run) + g₁·g₀ half-pairs: the rank-sum form of the Mann–Whitney
    /// statistic with ties at half (Mann &amp; Whitney 1947; Hanley &amp; McNeil 1982).
    /// </remarks>
    /// <exception cref="ArgumentOutOfRangeException">A prediction's p is NaN, infinite or outside [0, 1], or its y is not 0 or 1.</exception>
    public static double Of(ReadOnlySpan<GradedPrediction> predictions)
    {
        // One array of keys: a score in [0, 1] as its IEEE 754 bits (ordered as the values for
        // non-negative doubles; + 0.0 turns -0.0 into 0.0, which ties with it), shifted left
        // one place with the outcome in the freed bit. Sorting these orders by score, and a run
        // of equal scores is a run of equal keys once the outcome bit is dropped.
        var keys = new long[predictions.Length];
        for (int i = 0; i < predictions.Length; i++)
        {
            PredictionScores.Validate(predictions[i].P, predictions[i].Y);
            keys[i] = (BitConverter.DoubleToInt64Bits(predictions[i].P + 0.0) << 1) | (long)predictions[i].Y;
        }
        Array.Sort(keys);
        long halfPairs = 0;
        long positives = 0;
        long negativesBelow = 0;
        for (int start = 0; start < keys.Length;)
        {
            long score = keys[start] >> 1;
            int end = start;
            long runPositives = 0;
            while (end < keys.Length && keys[end] >> 1 == score)
            {
                runPositives += keys[end] & 1;
                end++;
            }
            long runNegatives = end - start - runPositives;
            halfPairs += (2 * runPositives * negativesBelow) + (runPositives * runNegatives);
            positives += runPositives;
            negativesBelow += runNegatives;
            start = end;
        }
        long count = predictions.Length;
        return positives == 0 || positives == count ? double.NaN : halfPairs / (2.0 * positives * (count - positives));
    }

    /// <summary>Empties the window; capacity is kept.</summary>
    public void Clear()
    {
        _tree.Clear();
        _oldest = 0;
        _count = 0;
        _halfPairs = 0;
        _positives = 0;
    }

    /// <summary>An independent copy; changes to one never reach the other.</summary>
    public RollingAuc Copy() => new(this);

    /// <summary>
    /// The predictions held, oldest first, for snapshots: adding them in order to an empty
    /// window of the same capacity gives this window back (its counts depend only on what it holds).
    /// </summary>
    public GradedPrediction[] Contents()
    {
        var result = new GradedPrediction[_count];
        for (int i = 0; i < _count; i++)
        {
            int slot = _oldest + i;
            result[i] = _ring[slot >= _ring.Length ? slot - _ring.Length : slot];
        }
        return result;
    }

    // Half-pairs between (p, y) and the opposite outcomes in the tree (which does not hold it),
    // from their counts below and at p.
    private long PairsWithOthers(int y, int below, int at)
    {
        if (y == 1)
        {
            return (2L * below) + at;
        }

        // Called while _positives counts exactly the positives in the tree.
        long above = _positives - below - at;
        return (2L * above) + at;
    }
}
