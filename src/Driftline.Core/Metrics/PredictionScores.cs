namespace Driftline.Core.Metrics;

/// <summary>Per-prediction scoring rules and the boundary check shared by every accumulator.</summary>
internal static class PredictionScores
{
    /// <summary>
    /// Clipping bound for log-loss: double machine epsilon, 2^-52. This is the value scikit-learn's
    /// <c>log_loss(eps='auto')</c> uses for float64 input, so our numbers can be checked against it.
    /// </summary>
    public const double LogLossEpsilon = 2.220446049250313e-16;

    /// <summary>
    /// Negative log-likelihood of one outcome, natural log, with p clipped to
    /// [<see cref="LogLossEpsilon"/>, 1 − <see cref="LogLossEpsilon"/>].
    /// </summary>
    /// <remarks>
    /// Clipping keeps a confident miss finite: the largest value is −ln(2^-52) ≈ 36.04, so one bad
    /// prediction cannot turn a window's mean into infinity. The argument is not validated here;
    /// callers go through <see cref="Validate"/> first.
    /// </remarks>
    public static double LogLoss(double p, int y)
    {
        double clipped = Math.Clamp(p, LogLossEpsilon, 1.0 - LogLossEpsilon);
        // 1 - clipped rather than a log1p form: this is how scikit-learn forms the negative-class
        // probability, and the two agree to far below the tolerances we check.
        return y == 1 ? -Math.Log(clipped) : -Math.Log(1.0 - clipped);
    }

    /// <summary>Squared error of one outcome, (p − y)², the term of the Brier score (Brier 1950).</summary>
    public static double SquaredError(double p, int y)
    {
        double d = p - y;
        return d * d;
    }

    /// <summary>
    /// Rejects anything that is not a probability and a binary outcome: non-finite p, p outside
    /// [0, 1], y other than 0 or 1.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">The named argument is out of range.</exception>
    /// <remarks>
    /// Callers validate records before they reach the metrics (bad input goes to dead letters);
    /// this is the last line, so a bug upstream fails loudly instead of poisoning running sums.
    /// </remarks>
    public static void Validate(double p, int y)
    {
        // The negated form also rejects NaN, which fails every comparison.
        if (!(p >= 0.0 && p <= 1.0))
        {
            throw new ArgumentOutOfRangeException(nameof(p), p, "A probability must be a finite number in [0, 1].");
        }

        if (y is not (0 or 1))
        {
            throw new ArgumentOutOfRangeException(nameof(y), y, "An outcome must be 0 or 1.");
        }
    }
}
