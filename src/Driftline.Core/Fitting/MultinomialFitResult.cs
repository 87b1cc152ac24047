namespace Driftline.Core.Fitting;

/// <summary>
/// The outcome of a joint multinomial (softmax) logistic fit by <see cref="MultinomialNewtonFit"/>.
/// Class 0 is the base: its intercept and coefficients are 0 and its rows hold no estimate
/// (standard errors NaN). Per-class lists are indexed [class][feature].
/// </summary>
/// <param name="Intercepts">Each class's intercept (log-odds against class 0 at x = 0).</param>
/// <param name="Coefficients">Each class's coefficients.</param>
/// <param name="InterceptStandardErrors">Each class's intercept standard error, from the inverse of the negative Hessian; NaN for class 0 or when the Hessian is singular.</param>
/// <param name="StandardErrors">Each class's coefficient standard errors.</param>
/// <param name="LogLikelihood">The log-likelihood at the estimate, without the ridge penalty.</param>
/// <param name="NullLogLikelihood">The log-likelihood of the intercepts-only model, Σ n_k·ln(n_k / N).</param>
/// <param name="Iterations">Newton steps taken.</param>
/// <param name="Converged">Whether the convergence test was met.</param>
/// <param name="Problem">Why the fit failed, in words a user can act on; null when it converged.</param>
/// <param name="Ridge">The L2 penalty used on the coefficients (not the intercepts).</param>
internal sealed record MultinomialFitResult(
    IReadOnlyList<double> Intercepts,
    IReadOnlyList<double[]> Coefficients,
    IReadOnlyList<double> InterceptStandardErrors,
    IReadOnlyList<double[]> StandardErrors,
    double LogLikelihood,
    double NullLogLikelihood,
    int Iterations,
    bool Converged,
    string? Problem,
    double Ridge)
{
    /// <summary>The number of classes.</summary>
    public int ClassCount => Intercepts.Count;

    /// <summary>McFadden's pseudo-R², 1 − LogLikelihood / NullLogLikelihood (McFadden 1974); NaN when the null log-likelihood is 0.</summary>
    public double McFaddenPseudoRSquared =>
        NullLogLikelihood < 0 && double.IsFinite(NullLogLikelihood) ? 1.0 - (LogLikelihood / NullLogLikelihood) : double.NaN;

    /// <summary>The class probabilities at <paramref name="features"/>, summing to 1.</summary>
    /// <param name="features">One value per feature.</param>
    /// <param name="probabilities">Filled with one probability per class.</param>
    public void Predict(ReadOnlySpan<double> features, Span<double> probabilities)
    {
        for (int k = 0; k < ClassCount; k++)
        {
            double eta = Intercepts[k];
            double[] w = Coefficients[k];
            for (int j = 0; j < w.Length; j++)
            {
                eta += w[j] * features[j];
            }

            probabilities[k] = eta;
        }

        MultinomialNewtonFit.Softmax(probabilities);
    }
}
