namespace Driftline.Core.Fitting;

/// <summary>
/// The logistic link's pieces written so that no finite margin gives NaN, infinity or a
/// needless loss of digits. The margin (linear predictor) is η = b0 + x·w; the model says
/// P(y = 1 | x) = 1 / (1 + e^−η).
/// </summary>
internal static class LogisticMath
{
    /// <summary>
    /// The probability 1 / (1 + e^−η) of label 1 at margin <paramref name="eta"/>.
    /// </summary>
    /// <param name="eta">The margin; any finite value. ±∞ give 1 and 0; NaN gives NaN.</param>
    /// <returns>A value in [0, 1]; exactly 1 only above η ≈ 37 and exactly 0 only below η ≈ −745.</returns>
    public static double Probability(double eta)
    {
        // Only ever exponentiate a non-positive number, so e^x cannot overflow.
        if (eta >= 0)
        {
            return 1.0 / (1.0 + Math.Exp(-eta));
        }

        double e = Math.Exp(eta);
        return e / (1.0 + e);
    }

    /// <summary>
    /// The softplus log(1 + e^η), as max(η, 0) + log1p(e^−|η|).
    /// </summary>
    /// <param name="eta">The margin; any finite value.</param>
    /// <returns>A non-negative value; about e^η for very negative η, about η for very positive η.</returns>
    public static double Softplus(double eta) => Math.Max(eta, 0.0) + Log1P(Math.Exp(-Math.Abs(eta)));

    /// <summary>
    /// One row's log-likelihood y·log p + (1 − y)·log(1 − p) at margin η, computed as
    /// −y·softplus(−η) − (1 − y)·softplus(η): log p = −softplus(−η) and
    /// log(1 − p) = −softplus(η), so no logarithm is ever taken of a rounded 0 or 1.
    /// </summary>
    /// <remarks>
    /// The shorter y·η − softplus(η) is the same number on paper but cancels to 0 for a
    /// confident correct margin (η = 40, y = 1), where the true value is −e^−40.
    /// </remarks>
    /// <param name="eta">The margin; any finite value.</param>
    /// <param name="label">The label, 0 or 1 (a value between weights the two terms, unchecked).</param>
    /// <returns>A value ≤ 0; a confident wrong margin gives about −|η|, never −∞.</returns>
    public static double LogLikelihood(double eta, double label)
    {
        double logP = -Softplus(-eta);
        double logOneMinusP = -Softplus(eta);
        return label == 1 ? logP : label == 0 ? logOneMinusP : (label * logP) + ((1 - label) * logOneMinusP);
    }

    /// <summary>
    /// The Bernoulli variance p·(1 − p) at margin η, which is the row's IRLS weight and its
    /// contribution to the Fisher information; computed as e^−|η| / (1 + e^−|η|)² because
    /// p·(1 − p) with p rounded to 1 would give 0 long before the true value underflows.
    /// </summary>
    /// <param name="eta">The margin; any finite value.</param>
    /// <returns>A value in [0, 0.25]; 0.25 at η = 0.</returns>
    public static double Variance(double eta)
    {
        double e = Math.Exp(-Math.Abs(eta));
        double onePlus = 1.0 + e;
        return e / (onePlus * onePlus);
    }

    /// <summary>
    /// log(1 + x), accurate for tiny x (where computing 1 + x first discards x's digits).
    /// </summary>
    /// <param name="x">A value greater than −1.</param>
    /// <returns>log(1 + x); x itself when 1 + x rounds to 1.</returns>
    /// <remarks>
    /// double.LogP1 is evaluated as Log(x + 1) and returns 0 for x = 1e−20. This uses the
    /// correction log(u)·x / (u − 1) with u = 1 + x, which cancels the rounding error of u
    /// (Goldberg 1991, "What Every Computer Scientist Should Know About Floating-Point
    /// Arithmetic", ACM Computing Surveys 23(1), Theorem 4).
    /// </remarks>
    public static double Log1P(double x)
    {
        double u = 1.0 + x;
        if (u == 1.0)
        {
            return x;
        }

        return Math.Log(u) * x / (u - 1.0);
    }
}
