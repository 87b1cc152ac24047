using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.LinearAlgebra.Factorization;

namespace Driftline.Core.Fitting;

/// <summary>
/// Batch maximum-likelihood fit of binary logistic regression with an intercept,
/// logit P(y = 1 | x) = b0 + x·w, by Newton–Raphson with step halving. It is the offline
/// reference the online learner is compared with, and the fit behind a one-shot model.
/// </summary>
/// <remarks>
/// <para>
/// For the logit link the observed and expected information are equal, so each Newton step
/// is one step of iteratively reweighted least squares (IRLS): solve
/// (X'WX + λD) δ = X'V(y − p) − λDβ with W = diag(v·p·(1 − p)), row weights v and D the
/// identity without its intercept entry (McCullagh &amp; Nelder 1989, Generalized Linear
/// Models, 2nd ed., §2.5 and ch. 4). The matrix is factored by Cholesky.
/// </para>
/// <para>
/// Finite estimates fail to exist exactly when the labels are separated by the features
/// (Albert &amp; Anderson 1984, "On the existence of maximum likelihood estimates in logistic
/// regression models", Biometrika 71(1)); the fit detects that instead of returning the huge
/// numbers an iteration limit would leave behind.
/// </para>
/// </remarks>
internal static class LogisticNewtonFit
{
    /// <summary>The default convergence tolerance, 1e−10; the Fit methods' tolerance parameter says how it is used.</summary>
    public const double DefaultTolerance = 1e-10;

    /// <summary>The default limit on Newton steps, 100; a well-posed fit needs about 5 to 15.</summary>
    public const int DefaultMaxIterations = 100;

    // 2^−40 of a Newton step is below anything that can still raise the log-likelihood.
    private const int MaxHalvings = 40;

    private const string SeparatedMessage =
        "the labels are perfectly separated by the features: a combination of them predicts every label exactly, " +
        "so the maximum-likelihood coefficients are infinite; add ridge (L2) or more data";

    private const string PartlySeparatedMessage =
        "the labels are perfectly separated by the features for part of the rows (quasi-complete separation): " +
        "those rows are predicted with certainty and the coefficients grow without bound; add ridge (L2) or more data";

    /// <summary>
    /// Fits the model to a dense design.
    /// </summary>
    /// <param name="features">Rows × features, finite values; no intercept column (one is added). Zero columns fit the intercept alone.</param>
    /// <param name="labels">One label per row, each exactly 0 or 1.</param>
    /// <param name="ridge">L2 penalty λ on the coefficients (not the intercept): the fit maximizes log-likelihood − λ/2·‖w‖². Default 0, plain maximum likelihood.</param>
    /// <param name="weights">Per-row weights, finite and ≥ 0, at least one positive; a weight of 2 counts a row twice, 0 drops it. Default null, every row 1.</param>
    /// <param name="start">
    /// Where Newton starts: intercept first, then one value per feature, all finite (a warm
    /// start, for example from an online model's weights). Default null, the intercept-only
    /// fit with coefficients 0. The maximum reached does not depend on it.
    /// </param>
    /// <param name="tolerance">
    /// Convergence: the relative change of the objective is at most this and no coefficient
    /// moved more than √tolerance·(1 + |b|), or no coefficient moved more than
    /// tolerance·(1 + |b|). Default 1e−10; must be in (0, 1).
    /// </param>
    /// <param name="maxIterations">Limit on Newton steps, at least 1. Default 100.</param>
    /// <param name="featureNames">One name per feature, used in <see cref="LogisticFitResult.Problem"/>; default null says "feature j".</param>
    /// <returns>
    /// The fit. A data set with one label only, separated labels (ridge 0), collinear
    /// features (ridge 0) or an iteration limit give <see cref="LogisticFitResult.Converged"/>
    /// false and a <see cref="LogisticFitResult.Problem"/> that names the cause and the fix.
    /// </returns>
    /// <exception cref="ArgumentException">No rows, mismatched lengths, a non-finite feature, a label other than 0 or 1, or a bad weight; the message names the row.</exception>
    /// <exception cref="ArgumentOutOfRangeException">Ridge, tolerance or iteration limit out of range.</exception>
    public static LogisticFitResult Fit(
        Matrix<double> features,
        IReadOnlyList<double> labels,
        double ridge = 0,
        IReadOnlyList<double>? weights = null,
        IReadOnlyList<double>? start = null,
        double tolerance = DefaultTolerance,
        int maxIterations = DefaultMaxIterations,
        IReadOnlyList<string>? featureNames = null)
    {
        ArgumentNullException.ThrowIfNull(features);
        if (features.RowCount == 0)
        {
            throw new ArgumentException("The design has no rows; a fit needs at least one labelled row.", nameof(features));
        }

        double[][] rows = features.ToRowArrays();
        var design = new double[rows.Length][];
        for (int i = 0; i < design.Length; i++)
        {
            design[i] = LogisticFitInput.DesignRow(rows[i], i, nameof(features));
        }

        return FitDesign(design, labels, ridge, weights, start, tolerance, maxIterations, featureNames);
    }

    /// <summary>
    /// Fits the model to rows of features; the same as the matrix overload in every other respect.
    /// </summary>
    /// <param name="rows">One array of finite features per row, all the same length (possibly 0).</param>
    /// <param name="labels">One label per row, each exactly 0 or 1.</param>
    /// <param name="ridge">L2 penalty on the coefficients, default 0.</param>
    /// <param name="weights">Per-row weights, default null (every row 1).</param>
    /// <param name="start">Starting intercept and coefficients, default null (the intercept-only fit).</param>
    /// <param name="tolerance">Convergence tolerance, default 1e−10.</param>
    /// <param name="maxIterations">Limit on Newton steps, default 100.</param>
    /// <param name="featureNames">One name per feature for messages, default null.</param>
    /// <returns>The fit; see the matrix overload for how failures are reported.</returns>
    /// <exception cref="ArgumentException">No rows, a null or ragged row, or any input the matrix overload rejects.</exception>
    /// <exception cref="ArgumentOutOfRangeException">Ridge, tolerance or iteration limit out of range.</exception>
    public static LogisticFitResult Fit(
        IReadOnlyList<double[]> rows,
        IReadOnlyList<double> labels,
        double ridge = 0,
        IReadOnlyList<double>? weights = null,
        IReadOnlyList<double>? start = null,
        double tolerance = DefaultTolerance,
        int maxIterations = DefaultMaxIterations,
        IReadOnlyList<string>? featureNames = null)
    {
        ArgumentNullException.ThrowIfNull(rows);
        if (rows.Count == 0)
        {
            throw new ArgumentException("There are no rows; a fit needs at least one labelled row.", nameof(rows));
        }

        var design = new double[rows.Count][];
        int width = -1;
        for (int i = 0; i < rows.Count; i++)
        {
            double[] row = rows[i] ?? throw new ArgumentException($"Row {i} is null.", nameof(rows));
            if (width >= 0 && row.Length != width)
            {
                throw new ArgumentException($"Row {i} has {row.Length} features but row 0 has {width}; every row needs the same features.", nameof(rows));
            }

            width = row.Length;
            design[i] = LogisticFitInput.DesignRow(row, i, nameof(rows));
        }

        return FitDesign(design, labels, ridge, weights, start, tolerance, maxIterations, featureNames);
    }

    private static LogisticFitResult FitDesign(
        double[][] x,
        IReadOnlyList<double> labels,
        double ridge,
        IReadOnlyList<double>? weights,
        IReadOnlyList<double>? start,
        double tolerance,
        int maxIterations,
        IReadOnlyList<string>? featureNames)
    {
        if (featureNames is not null && featureNames.Count != x[0].Length - 1)
        {
            throw new ArgumentException($"There are {featureNames.Count} feature names for {x[0].Length - 1} features; give one name per feature.", nameof(featureNames));
        }

        double[] y = LogisticFitInput.Labels(labels, x.Length);
        double[] v = LogisticFitInput.Weights(weights, x.Length);
        double[]? startingPoint = LogisticFitInput.Start(start, x[0].Length);
        LogisticFitInput.CheckSettings(ridge, tolerance, maxIterations);

        var likelihood = new LogisticLikelihood(x, y, v);
        if (likelihood.PositiveWeight == 0 || likelihood.NegativeWeight == 0)
        {
            // Even a ridge cannot help: the intercept is unpenalized and runs off to ±∞.
            string problem = $"every row with positive weight has label {(likelihood.PositiveWeight == 0 ? 0 : 1)}, so the intercept " +
                "has no finite estimate (ridge does not penalize the intercept); the fit needs rows of both labels";
            return Unfitted(likelihood, ridge, problem);
        }

        // By default start at the intercept-only maximum, the null model, coefficients 0.
        Vector<double> beta = Vector<double>.Build.Dense(likelihood.Width);
        if (startingPoint is null)
        {
            beta[0] = Math.Log(likelihood.PositiveWeight / likelihood.NegativeWeight);
        }
        else
        {
            beta.SetValues(startingPoint);
        }

        var eta = new double[x.Length];
        var candidateEta = new double[x.Length];
        double objective = likelihood.Objective(beta, ridge, eta);

        int iterations = 0;
        bool converged = false;
        string? failure = null;
        while (true)
        {
            if (ridge == 0 && likelihood.SeparatesStrictly(beta, eta))
            {
                failure = SeparatedMessage;
                break;
            }

            if (iterations == maxIterations)
            {
                failure = ridge == 0 && likelihood.HasCertainRows(eta)
                    ? PartlySeparatedMessage
                    : $"no convergence after {maxIterations} Newton steps; raise the iteration limit, or standardize features whose scales differ widely";
                break;
            }

            (Matrix<double> hessian, Vector<double> gradient) = likelihood.NewtonSystem(beta, eta, ridge);
            Cholesky<double>? factor = HessianFactor.TryFactor(hessian, out int singularColumn);
            if (factor is null)
            {
                failure = SingularMessage(likelihood, ridge, eta, iterations, singularColumn, featureNames);
                break;
            }

            Vector<double> step = factor.Solve(gradient);

            // Step halving: a full Newton step can overshoot far from the maximum; the
            // objective is concave, so a short enough piece of an ascent direction raises it.
            // The slack lets rounding at the maximum count as "no worse".
            double slack = 1e-12 * (1 + Math.Abs(objective));
            double scale = 1.0;
            Vector<double> candidate = beta + step;
            double candidateObjective = likelihood.Objective(candidate, ridge, candidateEta);
            for (int halvings = 0; !(candidateObjective >= objective - slack) && halvings < MaxHalvings; halvings++)
            {
                scale *= 0.5;
                candidate = beta + (scale * step);
                candidateObjective = likelihood.Objective(candidate, ridge, candidateEta);
            }

            if (!(candidateObjective >= objective - slack))
            {
                // Nothing along the direction helps: either the maximum is already reached to
                // rounding (the predicted gain g·δ is nil) or the numbers are in trouble.
                converged = gradient.DotProduct(step) <= tolerance * (1 + Math.Abs(objective));
                failure = "the log-likelihood stopped increasing before the fit converged; standardize the features or add ridge (L2)";
                break;
            }

            iterations++;
            double largestMove = LargestRelativeMove(candidate - beta, candidate);
            double change = Math.Abs(candidateObjective - objective) / (Math.Abs(candidateObjective) + tolerance);
            beta = candidate;
            (eta, candidateEta) = (candidateEta, eta);
            objective = candidateObjective;

            // Either test alone can be fooled: a flat objective is also what a quasi-separated
            // fit shows while its coefficients are still walking off to infinity.
            if (largestMove <= tolerance || (change <= tolerance && largestMove <= Math.Sqrt(tolerance)))
            {
                converged = true;
                break;
            }
        }

        return Summarize(likelihood, beta, eta, ridge, iterations, converged ? null : failure);
    }

    private static LogisticFitResult Summarize(
        LogisticLikelihood likelihood, Vector<double> beta, double[] eta, double ridge, int iterations, string? problem)
    {
        int width = beta.Count;
        (Matrix<double> hessian, Vector<double> gradient) = likelihood.NewtonSystem(beta, eta, ridge);
        var standardErrors = new double[width];
        Cholesky<double>? factor = HessianFactor.TryFactor(hessian, out _);
        if (factor is null)
        {
            Array.Fill(standardErrors, double.NaN);
        }
        else
        {
            Matrix<double> covariance = factor.Solve(Matrix<double>.Build.DenseIdentity(width));
            for (int j = 0; j < width; j++)
            {
                standardErrors[j] = Math.Sqrt(covariance[j, j]);
            }
        }

        var coefficients = new double[width - 1];
        var errors = new double[width - 1];
        var z = new double[width - 1];
        for (int j = 1; j < width; j++)
        {
            coefficients[j - 1] = beta[j];
            errors[j - 1] = standardErrors[j];
            z[j - 1] = beta[j] / standardErrors[j];
        }

        return new LogisticFitResult(
            Intercept: beta[0],
            Coefficients: coefficients,
            InterceptStandardError: standardErrors[0],
            StandardErrors: errors,
            InterceptZ: beta[0] / standardErrors[0],
            ZValues: z,
            LogLikelihood: likelihood.Objective(beta, 0, new double[likelihood.RowCount]),
            NullLogLikelihood: likelihood.NullLogLikelihood,
            Iterations: iterations,
            Converged: problem is null,
            MaxAbsGradient: gradient.AbsoluteMaximum(),
            Problem: problem,
            Ridge: ridge);
    }

    private static LogisticFitResult Unfitted(LogisticLikelihood likelihood, double ridge, string problem)
    {
        var nan = new double[likelihood.Width - 1];
        Array.Fill(nan, double.NaN);

        // With one label the supremum of the log-likelihood is 0, the same as the null model's.
        return new LogisticFitResult(
            double.NaN, nan, double.NaN, nan, double.NaN, nan,
            LogLikelihood: likelihood.NullLogLikelihood,
            NullLogLikelihood: likelihood.NullLogLikelihood,
            Iterations: 0,
            Converged: false,
            MaxAbsGradient: double.NaN,
            Problem: problem,
            Ridge: ridge);
    }

    private static double LargestRelativeMove(Vector<double> moved, Vector<double> beta)
    {
        double largest = 0;
        for (int j = 0; j < moved.Count; j++)
        {
            largest = Math.Max(largest, Math.Abs(moved[j]) / (1 + Math.Abs(beta[j])));
        }

        return largest;
    }

    private static string SingularMessage(
        LogisticLikelihood likelihood, double ridge, double[] eta, int iterations, int singularColumn, IReadOnlyList<string>? names)
    {
        // With every margin 0 each row has the same IRLS weight, so a singular matrix there is
        // the design's own fault (collinear columns). Otherwise the weights have collapsed
        // onto rows fitted with certainty, which is what separation does.
        (Matrix<double> uniform, _) = likelihood.NewtonSystem(
            Vector<double>.Build.Dense(likelihood.Width), new double[likelihood.RowCount], ridge);
        if (HessianFactor.TryFactor(uniform, out int collinearColumn) is null)
        {
            return CollinearMessage(collinearColumn, names);
        }

        if (ridge == 0 && likelihood.HasCertainRows(eta))
        {
            return PartlySeparatedMessage;
        }

        return $"the Hessian became singular after {iterations} Newton steps (at {ColumnName(singularColumn, names)}); " +
            "standardize the features or add ridge (L2)";
    }

    private static string CollinearMessage(int column, IReadOnlyList<string>? names)
    {
        int feature = column - 1;
        string what;
        if (names is null)
        {
            what = feature <= 0
                ? "feature 0 is constant (it duplicates the intercept)"
                : $"feature {feature} is constant or a linear combination of features 0–{feature - 1} and the intercept " +
                  "(for example a duplicate, or a one-hot group that sums to 1)";
        }
        else
        {
            what = feature <= 0
                ? $"'{names[Math.Max(feature, 0)]}' is constant (it duplicates the intercept)"
                : $"'{names[feature]}' is constant or a linear combination of the intercept and the features listed before it " +
                  "(for example a duplicate, or a one-hot group that sums to 1)";
        }

        return $"the features are collinear: {what}, so the Hessian is singular and the coefficients are not identified; " +
            "drop that feature or add ridge (L2)";
    }

    private static string ColumnName(int column, IReadOnlyList<string>? names) =>
        column <= 0 ? "the intercept" : names is null ? $"feature {column - 1}" : $"'{names[column - 1]}'";
}
