using System.Runtime.CompilerServices;

namespace Driftline.Core.Features;

/// <summary>
/// Running mean and variance per numeric feature (Welford 1962, "Note on a method for
/// calculating corrected sums of squares and products"), used to standardise raw-scale
/// numbers online so a basket value in the thousands and a ratio near 0.01 learn at the same
/// pace. O(1) per value, no allocation once a feature has been seen.
/// </summary>
internal sealed class NumericScaler
{
    /// <summary>Distinct numeric features tracked; beyond this, new names pass through unscaled.</summary>
    public const int MaxFeatures = 65_536;

    private readonly Dictionary<ulong, int> _index = new();
    private readonly double _limit;
    private long[] _count = new long[16];
    private double[] _mean = new double[16];
    private double[] _m2 = new double[16];

    /// <summary>Creates a scaler whose standardised values are clipped to ±<paramref name="limit"/>.</summary>
    public NumericScaler(double limit) => _limit = limit;

    /// <summary>
    /// When true, values are standardised with the statistics so far and not folded in (a
    /// batch fit's second pass); a feature never seen maps to 0. Default false.
    /// </summary>
    public bool Frozen { get; set; }

    /// <summary>Number of numeric features seen.</summary>
    public int Count => _index.Count;

    /// <summary>
    /// Folds <paramref name="x"/> into the statistics of <paramref name="nameHash"/>, then
    /// returns it standardised, (x − mean) / sd, clipped to ±limit. Returns 0 while the
    /// feature has fewer than two values or no spread: there is no scale to apply yet.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public double Standardise(ulong nameHash, double x)
    {
        if (!_index.TryGetValue(nameHash, out int i))
        {
            if (Frozen)
            {
                return 0;
            }
            if (_index.Count >= MaxFeatures)
            {
                return Math.Clamp(x, -_limit, _limit);
            }
            i = _index.Count;
            _index.Add(nameHash, i);
            if (i == _count.Length)
            {
                Array.Resize(ref _count, i * 2);
                Array.Resize(ref _mean, i * 2);
                Array.Resize(ref _m2, i * 2);
            }
        }
        long n = _count[i];
        if (!Frozen)
        {
            n = ++_count[i];
            double delta = x - _mean[i];
            _mean[i] += delta / n;
            _m2[i] += delta * (x - _mean[i]);
        }
        if (n < 2 || _m2[i] <= 0)
        {
            return 0;
        }
        double sd = Math.Sqrt(_m2[i] / (n - 1));
        return Math.Clamp((x - _mean[i]) / sd, -_limit, _limit);
    }

    /// <summary>The statistics of every feature, for a snapshot.</summary>
    public IEnumerable<NumericStats> Export()
    {
        foreach (var (hash, i) in _index)
        {
            yield return new NumericStats(hash, _count[i], _mean[i], _m2[i]);
        }
    }

    /// <summary>Adds the statistics of one feature from a snapshot.</summary>
    public void Import(NumericStats stats)
    {
        int i = _index.Count;
        _index.Add(stats.NameHash, i);
        if (i == _count.Length)
        {
            Array.Resize(ref _count, i * 2);
            Array.Resize(ref _mean, i * 2);
            Array.Resize(ref _m2, i * 2);
        }
        _count[i] = stats.Count;
        _mean[i] = stats.Mean;
        _m2[i] = stats.SumSquares;
    }
}

/// <summary>Running statistics of one numeric feature.</summary>
/// <param name="NameHash">Hash of the feature name.</param>
/// <param name="Count">Values seen.</param>
/// <param name="Mean">Running mean.</param>
/// <param name="SumSquares">Sum of squared deviations from the mean (Welford's M2).</param>
internal readonly record struct NumericStats(ulong NameHash, long Count, double Mean, double SumSquares);
