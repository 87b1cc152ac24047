using System.Diagnostics;

namespace Driftline.Core.Metrics;

/// <summary>
/// Equal-width bins over [0, 1] with the edges <c>numpy.linspace(0, 1, bins + 1)</c> reproduces as
/// IEEE doubles, and the two rules for which bin an edge belongs to.
/// </summary>
/// <remarks>
/// The edges are <c>k · (1 / bins)</c> rounded to double, with the last edge exactly 1, as numpy
/// computes them. Taking them literally matters: with 10 bins the fourth edge is
/// 0.30000000000000004, so p = 0.3 lies below it and falls in bin 2, not bin 3. Instances are
/// immutable and may be shared.
/// </remarks>
internal sealed class BinEdges
{
    private readonly double[] _edges;

    /// <summary>Creates <paramref name="bins"/> equal-width bins over [0, 1].</summary>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="bins"/> is less than 1.</exception>
    public BinEdges(int bins)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(bins, 1);
        Bins = bins;
        _edges = new double[bins + 1];
        double step = 1.0 / bins;
        for (int k = 0; k < bins; k++)
        {
            _edges[k] = k * step;
        }

        _edges[bins] = 1.0;
        for (int k = 0; k < bins; k++)
        {
            Debug.Assert(_edges[k] < _edges[k + 1], "bin edges must increase strictly");
        }
    }

    /// <summary>Number of bins.</summary>
    public int Bins { get; }

    /// <summary>Lower edge of bin <paramref name="bin"/>.</summary>
    public double Lower(int bin) => _edges[bin];

    /// <summary>Upper edge of bin <paramref name="bin"/>; exactly 1 for the last bin.</summary>
    public double Upper(int bin) => _edges[bin + 1];

    /// <summary>
    /// Left-closed bin of <paramref name="p"/>: bin k is [e_k, e_{k+1}) and the last bin is
    /// [e_{bins−1}, 1], so 1 has a bin. Equals <c>numpy.searchsorted(edges[1:-1], p, side='right')</c>.
    /// </summary>
    /// <remarks>p must be in [0, 1]; it is not checked here because callers have validated it.</remarks>
    public int LeftClosedIndex(double p)
    {
        int k = Guess(p);
        // The guess from floor(p · bins) can be one off either way near an edge, because the edge
        // is k · (1 / bins) rounded, not k / bins; the exact edges settle it.
        while (k < Bins - 1 && p >= _edges[k + 1])
        {
            k++;
        }

        while (k > 0 && p < _edges[k])
        {
            k--;
        }

        return k;
    }

    /// <summary>
    /// Right-closed bin of <paramref name="p"/>: bin 0 is [0, e_1] and bin k is (e_k, e_{k+1}] for
    /// k ≥ 1. This is scikit-learn's <c>calibration_curve</c> rule,
    /// <c>numpy.searchsorted(edges[1:-1], p, side='left')</c>.
    /// </summary>
    /// <remarks>p must be in [0, 1]; it is not checked here because callers have validated it.</remarks>
    public int RightClosedIndex(double p)
    {
        int k = Guess(p);
        while (k < Bins - 1 && p > _edges[k + 1])
        {
            k++;
        }

        while (k > 0 && p <= _edges[k])
        {
            k--;
        }

        return k;
    }

    private int Guess(double p)
    {
        Debug.Assert(p >= 0.0 && p <= 1.0, "p must be validated before binning");
        return Math.Min((int)(p * Bins), Bins - 1);
    }
}
