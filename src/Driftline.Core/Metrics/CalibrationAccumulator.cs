using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace Driftline.Core.Metrics;

/// <summary>
/// Running sums behind every calibration window: count, positives, log-loss, squared error and
/// probability, overall and per reliability bin, with O(1) add and remove.
/// </summary>
/// <remarks>
/// <para>
/// Sums are held in <see cref="FixedPoint"/>, so <see cref="Remove(double, int)"/> undoes <see cref="Add(double, int)"/>
/// exactly and the state depends only on the multiset of predictions held, not on the order or
/// the history of adds and removes. No allocation after construction.
/// </para>
/// <para>
/// Arguments are not validated here: the owning window validates before it stores a prediction,
/// and <see cref="Remove(double, int)"/> is only called with what was added.
/// </para>
/// </remarks>
internal sealed class CalibrationAccumulator
{
    private readonly BinEdges _edges;
    private readonly long[] _binCount;
    private readonly long[] _binPositives;
    private readonly Int128[] _binProbability;
    private long _count;
    private long _positives;
    private Int128 _logLoss;
    private Int128 _squaredError;
    private Int128 _probability;
    private Int128 _variance;

    /// <summary>Creates an empty accumulator over the given bins.</summary>
    public CalibrationAccumulator(BinEdges edges)
    {
        _edges = edges;
        _binCount = new long[edges.Bins];
        _binPositives = new long[edges.Bins];
        _binProbability = new Int128[edges.Bins];
    }

    private CalibrationAccumulator(CalibrationAccumulator source)
    {
        _edges = source._edges;
        _binCount = (long[])source._binCount.Clone();
        _binPositives = (long[])source._binPositives.Clone();
        _binProbability = (Int128[])source._binProbability.Clone();
        _count = source._count;
        _positives = source._positives;
        _logLoss = source._logLoss;
        _squaredError = source._squaredError;
        _probability = source._probability;
        _variance = source._variance;
    }

    /// <summary>Bin edges in use.</summary>
    public BinEdges Edges => _edges;

    /// <summary>Number of predictions held.</summary>
    public long Count => _count;

    /// <summary>Number of held predictions with outcome 1.</summary>
    public long Positives => _positives;

    /// <summary>Mean log-loss in O(1), NaN when empty (what <see cref="Snapshot"/> reports, without the bins).</summary>
    public double MeanLogLoss => _count == 0 ? double.NaN : FixedPoint.ToDouble(_logLoss) / _count;

    /// <summary>Mean p − mean y in O(1), NaN when empty (what <see cref="Snapshot"/> reports, without the bins).</summary>
    public double CalibrationInTheLarge => _count == 0 ? double.NaN : FixedPoint.ToDouble(_probability - FixedPoint.FromCount(_positives)) / _count;

    /// <summary>
    /// The calibration-in-the-large z-score in O(1): (Σp − Σy) / √Σp(1 − p), the gap in
    /// standard errors of what a calibrated model would show (the variance of Σy when every
    /// y ~ Bernoulli(p) independently; common practice, e.g. Spiegelhalter 1986 on testing
    /// calibration). Positive when over-predicting; NaN when empty or when every p is 0 or 1.
    /// </summary>
    public double CalibrationZ
    {
        get
        {
            double variance = FixedPoint.ToDouble(_variance);
            return _count == 0 || variance <= 0 ? double.NaN : FixedPoint.ToDouble(_probability - FixedPoint.FromCount(_positives)) / Math.Sqrt(variance);
        }
    }

    /// <summary>Adds one prediction (already validated).</summary>
    public void Add(double p, int y) => Apply(Terms(p, y), +1);

    /// <summary>Adds one prediction's terms, computed over the same bins.</summary>
    public void Add(in GradedTerms terms)
    {
        Debug.Assert(terms.Bins == _edges.Bins, "terms computed over other bins");
        Apply(terms, +1);
    }

    /// <summary>Removes one prediction that was added earlier.</summary>
    public void Remove(double p, int y) => Remove(Terms(p, y));

    /// <summary>Removes the terms of one prediction that was added earlier.</summary>
    public void Remove(in GradedTerms terms)
    {
        Debug.Assert(_count > 0, "remove from an empty accumulator");
        Debug.Assert(terms.Bins == _edges.Bins, "terms computed over other bins");
        Apply(terms, -1);
        Debug.Assert(_count >= 0 && _positives >= 0 && _logLoss >= 0 && _squaredError >= 0 && _probability >= 0,
            "remove of a prediction that was never added");
    }

    /// <summary>
    /// Removes <paramref name="removed"/> (added earlier) and adds <paramref name="added"/> in one
    /// pass, as a full window does on every label. The sums are integers (fixed point), so the
    /// differences give the same state, bit for bit, as a remove followed by an add.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Replace(in GradedTerms removed, in GradedTerms added)
    {
        Debug.Assert(_count > 0, "replace in an empty accumulator");
        Debug.Assert(removed.Bins == _edges.Bins && added.Bins == _edges.Bins, "terms computed over other bins");
        int dy = added.Y - removed.Y;
        _positives += dy;
        _logLoss += added.LogLoss - removed.LogLoss;
        _squaredError += added.SquaredError - removed.SquaredError;
        _probability += added.Probability - removed.Probability;
        _variance += added.Variance - removed.Variance;
        int bin = added.Bin;
        int old = removed.Bin;
        if (bin == old)
        {
            _binPositives[bin] += dy;
            _binProbability[bin] += added.Probability - removed.Probability;
        }
        else
        {
            _binCount[old]--;
            _binPositives[old] -= removed.Y;
            _binProbability[old] -= removed.Probability;
            _binCount[bin]++;
            _binPositives[bin] += added.Y;
            _binProbability[bin] += added.Probability;
        }
    }

    /// <summary>Forgets everything; the bins are kept.</summary>
    public void Clear()
    {
        Array.Clear(_binCount);
        Array.Clear(_binPositives);
        Array.Clear(_binProbability);
        _count = 0;
        _positives = 0;
        _logLoss = 0;
        _squaredError = 0;
        _probability = 0;
        _variance = 0;
    }

    /// <summary>An independent copy sharing nothing mutable.</summary>
    public CalibrationAccumulator Copy() => new(this);

    /// <summary>Current metric values; <see cref="CalibrationSnapshot.Empty"/> when nothing is held. O(bins).</summary>
    public CalibrationSnapshot Snapshot()
    {
        if (_count == 0)
        {
            return CalibrationSnapshot.Empty;
        }

        double n = _count;
        // Expected calibration error (Naeini, Cooper & Hauskrecht 2015, "Obtaining Well Calibrated
        // Probabilities Using Bayesian Binning"; Guo, Pleiss, Sun & Weinberger 2017, "On Calibration
        // of Modern Neural Networks"): sum over bins of (n_b / N) · |mean p_b − mean y_b|, which is
        // (1 / N) · sum of |sum p_b − positives_b|. Empty bins contribute nothing. The differences
        // are taken in fixed point, so the only rounding is the final division.
        Int128 gap = 0;
        for (int k = 0; k < _binCount.Length; k++)
        {
            gap = checked(gap + Int128.Abs(_binProbability[k] - FixedPoint.FromCount(_binPositives[k])));
        }

        double meanP = FixedPoint.ToDouble(_probability) / n;
        double meanY = _positives / n;
        double inTheLarge = FixedPoint.ToDouble(_probability - FixedPoint.FromCount(_positives)) / n;
        return new CalibrationSnapshot(
            (int)Math.Min(_count, int.MaxValue),
            FixedPoint.ToDouble(_logLoss) / n,
            FixedPoint.ToDouble(_squaredError) / n,
            FixedPoint.ToDouble(gap) / n,
            meanP,
            meanY,
            inTheLarge);
    }

    /// <summary>
    /// Writes one <see cref="ReliabilityBin"/> per bin, in order, into the first
    /// <see cref="BinEdges.Bins"/> elements of <paramref name="destination"/>. Empty bins have
    /// count 0 and NaN means.
    /// </summary>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is shorter than the number of bins.</exception>
    public void CopyBins(Span<ReliabilityBin> destination)
    {
        if (destination.Length < _binCount.Length)
        {
            throw new ArgumentException($"Needs room for {_binCount.Length} bins, got {destination.Length}.", nameof(destination));
        }

        for (int k = 0; k < _binCount.Length; k++)
        {
            long n = _binCount[k];
            destination[k] = n == 0
                ? new ReliabilityBin(k, _edges.Lower(k), _edges.Upper(k), 0, double.NaN, double.NaN)
                : new ReliabilityBin(k, _edges.Lower(k), _edges.Upper(k), n,
                    FixedPoint.ToDouble(_binProbability[k]) / n, _binPositives[k] / (double)n);
        }
    }

    /// <summary>The raw sums, for snapshotting; see <see cref="CalibrationTotalsState"/>.</summary>
    public CalibrationTotalsState ToState() => new(
        _edges.Bins, _count, _positives, _logLoss, _squaredError, _probability,
        (long[])_binCount.Clone(), (long[])_binPositives.Clone(), (Int128[])_binProbability.Clone())
    {
        VarianceSum = _variance,
    };

    /// <summary>Rebuilds an accumulator from raw sums after checking they are consistent.</summary>
    /// <exception cref="ArgumentException">The state is inconsistent; the message says how.</exception>
    public static CalibrationAccumulator FromState(CalibrationTotalsState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        string? problem = state.FindInconsistency();
        if (problem is not null)
        {
            throw new ArgumentException($"Calibration totals state is inconsistent: {problem}.", nameof(state));
        }

        var result = new CalibrationAccumulator(new BinEdges(state.Bins));
        state.BinCounts.CopyTo(result._binCount, 0);
        state.BinPositives.CopyTo(result._binPositives, 0);
        state.BinProbabilitySums.CopyTo(result._binProbability, 0);
        result._count = state.Count;
        result._positives = state.Positives;
        result._logLoss = state.LogLossSum;
        result._squaredError = state.SquaredErrorSum;
        result._probability = state.ProbabilitySum;
        result._variance = state.VarianceSum;
        return result;
    }

    // The owning window has validated (p, y) already.
    private GradedTerms Terms(double p, int y) => GradedTerms.Of(p, y, _edges);

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void Apply(in GradedTerms t, int sign)
    {
        int bin = t.Bin;
        Int128 rawP = t.Probability;
        Int128 rawLoss = t.LogLoss;
        Int128 rawSquared = t.SquaredError;
        Int128 rawVariance = t.Variance;
        if (sign < 0)
        {
            rawP = -rawP;
            rawLoss = -rawLoss;
            rawSquared = -rawSquared;
            rawVariance = -rawVariance;
        }

        // No overflow checks: a term is at most FixedPoint.MaxTerm = 2^6, i.e. 2^70 raw, so a
        // 128-bit sum holds 2^57 terms, and the count is a long. The checked 128-bit adds were
        // a measurable share of every label's cost.
        _count += sign;
        _positives += sign * t.Y;
        _logLoss += rawLoss;
        _squaredError += rawSquared;
        _probability += rawP;
        _variance += rawVariance;
        _binCount[bin] += sign;
        _binPositives[bin] += sign * t.Y;
        _binProbability[bin] += rawP;
    }
}
