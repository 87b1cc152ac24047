namespace Driftline.Core.Metrics;

/// <summary>
/// One graded prediction as the running sums see it: its reliability bin and each term (p,
/// log-loss, squared error, p(1 − p)) rounded once to <see cref="FixedPoint"/>.
/// </summary>
/// <remarks>
/// The engine computes the terms once per label and hands the same value to every window and
/// total with the same bins, and a window keeps them in its ring, so an eviction subtracts
/// exactly what was added without taking a logarithm again. The terms are a function of
/// (p, y, bins) alone, so a window fed terms is bit for bit the window fed (p, y).
/// </remarks>
internal readonly struct GradedTerms
{
    private GradedTerms(double p, int y, int bin, int bins)
    {
        P = p;
        Y = y;
        Bin = bin;
        Bins = bins;
        Probability = FixedPoint.FromDouble(p);
        LogLoss = FixedPoint.FromDouble(PredictionScores.LogLoss(p, y));
        SquaredError = FixedPoint.FromDouble(PredictionScores.SquaredError(p, y));
        Variance = FixedPoint.FromDouble(p * (1 - p));
    }

    /// <summary>The probability that was graded.</summary>
    public double P { get; }

    /// <summary>The outcome, 0 or 1.</summary>
    public int Y { get; }

    /// <summary>Left-closed reliability bin of <see cref="P"/>.</summary>
    public int Bin { get; }

    /// <summary>Number of bins <see cref="Bin"/> was found among.</summary>
    public int Bins { get; }

    /// <summary>p in fixed point.</summary>
    public Int128 Probability { get; }

    /// <summary>The log-loss term in fixed point.</summary>
    public Int128 LogLoss { get; }

    /// <summary>The squared-error (Brier) term in fixed point.</summary>
    public Int128 SquaredError { get; }

    /// <summary>p(1 − p), the Bernoulli variance, in fixed point.</summary>
    public Int128 Variance { get; }

    /// <summary>The terms of (p, y) over <paramref name="edges"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="p"/> is NaN, infinite or outside [0, 1], or <paramref name="y"/> is not 0 or 1.
    /// </exception>
    public static GradedTerms Of(double p, int y, BinEdges edges)
    {
        PredictionScores.Validate(p, y);
        return new GradedTerms(p, y, edges.LeftClosedIndex(p), edges.Bins);
    }

    /// <summary>The prediction alone, for snapshots.</summary>
    public GradedPrediction Prediction => new(P, Y);
}
