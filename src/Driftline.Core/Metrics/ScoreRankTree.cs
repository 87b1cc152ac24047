namespace Driftline.Core.Metrics;

/// <summary>
/// A multiset of (score, outcome) pairs that answers "how many positives (negatives) score below,
/// and exactly at, s" in O(log n): a treap keyed by the exact score, each node holding the counts
/// of both outcomes at its score and in its subtree. Aragon &amp; Seidel (1989), "Randomized search
/// trees", FOCS; the rank counts as in any order-statistics tree.
/// </summary>
/// <remarks>
/// Nodes live in arrays sized once for the most distinct scores held, so updates allocate
/// nothing and a copy is a few array clones. Priorities come from a seeded xorshift generator
/// (Marsaglia 2003, "Xorshift RNGs", Journal of Statistical Software 8(14)) whose state is part of
/// the copy, so a copy reshapes exactly as the original would.
/// </remarks>
internal sealed class ScoreRankTree
{
    private const int None = -1;
    private readonly double[] _key;
    private readonly uint[] _priority;
    private readonly int[] _left;
    private readonly int[] _right;
    private readonly int[] _here;
    private readonly int[] _below;
    private readonly int[] _free;
    private int _freeCount;
    private int _root = None;
    private uint _random = 2463534242;

    /// <summary>Creates an empty tree with room for <paramref name="capacity"/> distinct scores.</summary>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="capacity"/> is less than 1.</exception>
    public ScoreRankTree(int capacity)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        _key = new double[capacity];
        _priority = new uint[capacity];
        _left = new int[capacity];
        _right = new int[capacity];
        _here = new int[2 * capacity];
        _below = new int[2 * capacity];
        _free = new int[capacity];
        for (int i = 0; i < capacity; i++)
        {
            _free[i] = capacity - 1 - i;
        }

        _freeCount = capacity;
    }

    private ScoreRankTree(ScoreRankTree source)
    {
        _key = (double[])source._key.Clone();
        _priority = (uint[])source._priority.Clone();
        _left = (int[])source._left.Clone();
        _right = (int[])source._right.Clone();
        _here = (int[])source._here.Clone();
        _below = (int[])source._below.Clone();
        _free = (int[])source._free.Clone();
        _freeCount = source._freeCount;
        _root = source._root;
        _random = source._random;
    }

    /// <summary>Adds one pair. The caller keeps the number of distinct scores within capacity.</summary>
    public void Add(double score, int y) => AddAndRank(score, y);

    /// <summary>Removes one pair that is present (the caller guarantees it).</summary>
    public void Remove(double score, int y) => RemoveAndRank(score, y);

    /// <summary>
    /// Adds one pair and returns what <see cref="Rank"/> gave for the opposite outcome
    /// (1 − <paramref name="y"/>) just before: the insert walks the same path, so the rank costs
    /// no second descent. The caller keeps the number of distinct scores within capacity.
    /// </summary>
    public (int Below, int At) AddAndRank(double score, int y)
    {
        int below = 0, at = 0;
        _root = Insert(_root, score, y, ref below, ref at);
        return (below, at);
    }

    /// <summary>
    /// Removes one pair that is present (the caller guarantees it) and returns the
    /// <see cref="Rank"/> of the opposite outcome at its score, which the removal leaves unchanged.
    /// </summary>
    public (int Below, int At) RemoveAndRank(double score, int y)
    {
        int below = 0, at = 0;
        _root = Delete(_root, score, y, ref below, ref at);
        return (below, at);
    }

    /// <summary>Counts of outcome <paramref name="y"/> with score strictly below, and exactly at, <paramref name="score"/>.</summary>
    public (int Below, int At) Rank(double score, int y)
    {
        int below = 0;
        int t = _root;
        while (t != None)
        {
            if (score < _key[t])
            {
                t = _left[t];
            }
            else if (score > _key[t])
            {
                below += Sub(_left[t], y) + _here[(2 * t) + y];
                t = _right[t];
            }
            else
            {
                return (below + Sub(_left[t], y), _here[(2 * t) + y]);
            }
        }

        return (below, 0);
    }

    /// <summary>Empties the tree.</summary>
    public void Clear()
    {
        for (int i = 0; i < _free.Length; i++)
        {
            _free[i] = _free.Length - 1 - i;
        }

        _freeCount = _free.Length;
        _root = None;
    }

    /// <summary>An independent copy.</summary>
    public ScoreRankTree Copy() => new(this);

    private int Sub(int t, int y) => t == None ? 0 : _below[(2 * t) + y];

    // Runs on every node of every walk: both outcomes at once, each child read once.
    private void Pull(int t)
    {
        int negatives = _here[2 * t], positives = _here[(2 * t) + 1];
        int left = _left[t], right = _right[t];
        if (left != None)
        {
            negatives += _below[2 * left];
            positives += _below[(2 * left) + 1];
        }
        if (right != None)
        {
            negatives += _below[2 * right];
            positives += _below[(2 * right) + 1];
        }
        _below[2 * t] = negatives;
        _below[(2 * t) + 1] = positives;
    }

    // Both walks add up the opposite outcome's counts on the way down, before anything below
    // the current node changes, exactly as Rank would.
    private int Insert(int t, double score, int y, ref int below, ref int at)
    {
        if (t == None)
        {
            int node = _free[--_freeCount];
            _key[node] = score;
            _random ^= _random << 13;
            _random ^= _random >> 17;
            _random ^= _random << 5;
            _priority[node] = _random;
            _left[node] = None;
            _right[node] = None;
            _here[2 * node] = y == 0 ? 1 : 0;
            _here[(2 * node) + 1] = y == 1 ? 1 : 0;
            Pull(node);
            return node;
        }

        if (score < _key[t])
        {
            int child = Insert(_left[t], score, y, ref below, ref at);
            _left[t] = child;
            if (_priority[child] > _priority[t])
            {
                // Rotate right: the child rises above t.
                _left[t] = _right[child];
                _right[child] = t;
                Pull(t);
                Pull(child);
                return child;
            }
        }
        else if (score > _key[t])
        {
            below += Sub(_left[t], 1 - y) + _here[(2 * t) + 1 - y];
            int child = Insert(_right[t], score, y, ref below, ref at);
            _right[t] = child;
            if (_priority[child] > _priority[t])
            {
                _right[t] = _left[child];
                _left[child] = t;
                Pull(t);
                Pull(child);
                return child;
            }
        }
        else
        {
            below += Sub(_left[t], 1 - y);
            at = _here[(2 * t) + 1 - y];
            _here[(2 * t) + y]++;
        }

        Pull(t);
        return t;
    }

    private int Delete(int t, double score, int y, ref int below, ref int at)
    {
        if (score < _key[t])
        {
            _left[t] = Delete(_left[t], score, y, ref below, ref at);
        }
        else if (score > _key[t])
        {
            below += Sub(_left[t], 1 - y) + _here[(2 * t) + 1 - y];
            _right[t] = Delete(_right[t], score, y, ref below, ref at);
        }
        else
        {
            below += Sub(_left[t], 1 - y);
            at = _here[(2 * t) + 1 - y];
            _here[(2 * t) + y]--;
            if (_here[2 * t] == 0 && _here[(2 * t) + 1] == 0)
            {
                _free[_freeCount++] = t;
                return Merge(_left[t], _right[t]);
            }
        }

        Pull(t);
        return t;
    }

    private int Merge(int a, int b)
    {
        // Every key in a is below every key in b.
        if (a == None)
        {
            return b;
        }

        if (b == None)
        {
            return a;
        }

        if (_priority[a] > _priority[b])
        {
            _right[a] = Merge(_right[a], b);
            Pull(a);
            return a;
        }

        _left[b] = Merge(a, _left[b]);
        Pull(b);
        return b;
    }
}
