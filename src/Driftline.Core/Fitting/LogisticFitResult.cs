namespace Driftline.Core.Fitting;

/// <summary>
/// The outcome of a batch logistic fit by <see cref="LogisticNewtonFit"/>. Per-feature lists
/// are in the order of the design's columns; the intercept is reported separately.
/// </summary>
/// <remarks>
/// When <see cref="Converged"/> is false the estimates are those of the last iterate (or
/// NaN where no iterate exists) and are not a fit: read <see cref="Problem"/> for why.
/// </remarks>
/// <param name="Intercept">The fitted intercept b0.</param>
/// <param name="Coefficients">The fitted coefficient of each feature.</param>
/// <param name="InterceptStandardError">
/// Standard error of the intercept: the square root of the intercept's diagonal entry of the
/// inverse of the negative Hessian at the estimate. NaN when that matrix is singular.
/// </param>
/// <param name="StandardErrors">Standard error of each coefficient, computed the same way.</param>
/// <param name="InterceptZ">The intercept divided by its standard error (Wald z).</param>
/// <param name="ZValues">Each coefficient divided by its standard error.</param>
/// <param name="LogLikelihood">
/// The (row-weighted) log-likelihood of the data at the estimate, without the ridge penalty.
/// </param>
/// <param name="NullLogLikelihood">
/// The log-likelihood of the intercept-only model fitted to the same rows and weights;
/// 0 when every weighted row has the same label.
/// </param>
/// <param name="Iterations">The number of Newton steps taken.</param>
/// <param name="Converged">Whether the convergence test was met; false means see <see cref="Problem"/>.</param>
/// <param name="MaxAbsGradient">
/// The largest absolute entry of the score (gradient of the maximized objective, ridge
/// included) at the estimate; near 0 at a true maximum.
/// </param>
/// <param name="Problem">Why the fit failed, in words a user can act on; null when it converged.</param>
/// <param name="Ridge">
/// The L2 penalty used. When it is above 0 the standard errors come from the penalized Hessian
/// and are not the usual maximum-likelihood ones.
/// </param>
internal sealed record LogisticFitResult(
    double Intercept,
    IReadOnlyList<double> Coefficients,
    double InterceptStandardError,
    IReadOnlyList<double> StandardErrors,
    double InterceptZ,
    IReadOnlyList<double> ZValues,
    double LogLikelihood,
    double NullLogLikelihood,
    int Iterations,
    bool Converged,
    double MaxAbsGradient,
    string? Problem,
    double Ridge)
{
    /// <summary>
    /// McFadden's pseudo-R², 1 − LogLikelihood / NullLogLikelihood (McFadden 1974,
    /// "Conditional logit analysis of qualitative choice behavior"). NaN when the null
    /// log-likelihood is 0 or not finite, where the ratio means nothing.
    /// </summary>
    public double McFaddenPseudoRSquared =>
        NullLogLikelihood < 0 && double.IsFinite(NullLogLikelihood)
            ? 1.0 - (LogLikelihood / NullLogLikelihood)
            : double.NaN;
}
