using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.LinearAlgebra.Factorization;

namespace Driftline.Core.Fitting;

/// <summary>
/// Batch maximum-likelihood fit of the multinomial (softmax) logistic model, all classes
/// jointly: P(y = k | x) = exp(η_k) / Σ_l exp(η_l), η_k = b_k + x·w_k, with class 0 the base
/// (η_0 = 0), by Newton–Raphson with step halving.
/// </summary>
/// <remarks>
/// <para>
/// The parameters are stacked class by class, (b_1, w_1, …, b_{K−1}, w_{K−1}). The score of
/// class k is Σ_i (1[y_i = k] − p_ik) x̃_i and block (k, l) of the negative Hessian is
/// Σ_i p_ik (δ_kl − p_il) x̃_i x̃_iᵀ, with x̃ = (1, x); for the canonical link the observed and
/// expected information agree, so this is also Fisher scoring (McCullagh &amp; Nelder 1989,
/// Generalized Linear Models, 2nd ed., ch. 5; Greene, Econometric Analysis, "multinomial logit").
/// Standard errors are the square roots of the diagonal of its inverse at the estimate.
/// </para>
/// <para>
/// Fitting K − 1 binary models and normalising is not this fit: only the joint likelihood makes
/// the probabilities sum to one with coefficients that maximise it.
/// </para>
/// </remarks>
internal static class MultinomialNewtonFit
{
    private const int MaxHalvings = 40;

    /// <summary>
    /// Fits the model.
    /// </summary>
    /// <param name="rows">One array of finite features per row, all the same length (possibly 0); no intercept column.</param>
    /// <param name="labels">Each row's class, in [0, <paramref name="classCount"/>).</param>
    /// <param name="classCount">K, at least 2 (2 is the binary logit with class 1 against class 0).</param>
    /// <param name="ridge">L2 penalty λ on the coefficients (not the intercepts), default 0.</param>
    /// <param name="featureNames">One name per feature for messages, default null ("feature j").</param>
    /// <param name="tolerance">Convergence: no parameter moved more than this times (1 + |value|). Default 1e−10.</param>
    /// <param name="maxIterations">Limit on Newton steps, default 100.</param>
    /// <returns>
    /// The fit. A class with no rows, collinear features or separation (ridge 0), or the
    /// iteration limit give <see cref="MultinomialFitResult.Converged"/> false and a problem in words.
    /// </returns>
    /// <exception cref="ArgumentException">No rows, ragged rows, a non-finite feature, a label out of range, or names of the wrong count.</exception>
    /// <exception cref="ArgumentOutOfRangeException">Class count, ridge, tolerance or iteration limit out of range.</exception>
    public static MultinomialFitResult Fit(
        IReadOnlyList<double[]> rows,
        IReadOnlyList<int> labels,
        int classCount,
        double ridge = 0,
        IReadOnlyList<string>? featureNames = null,
        double tolerance = LogisticNewtonFit.DefaultTolerance,
        int maxIterations = LogisticNewtonFit.DefaultMaxIterations)
    {
        ArgumentNullException.ThrowIfNull(rows);
        ArgumentNullException.ThrowIfNull(labels);
        ArgumentOutOfRangeException.ThrowIfLessThan(classCount, 2);
        LogisticFitInput.CheckSettings(ridge, tolerance, maxIterations);
        if (rows.Count == 0 || labels.Count != rows.Count)
        {
            throw new ArgumentException($"There are {rows.Count} rows and {labels.Count} labels; a fit needs one label per row and at least one row.", nameof(rows));
        }

        int features = rows[0]?.Length ?? 0;
        var x = new double[rows.Count][];
        var counts = new double[classCount];
        for (int i = 0; i < rows.Count; i++)
        {
            double[] row = rows[i] ?? throw new ArgumentException($"Row {i} is null.", nameof(rows));
            if (row.Length != features)
            {
                throw new ArgumentException($"Row {i} has {row.Length} features but row 0 has {features}; every row needs the same features.", nameof(rows));
            }

            x[i] = LogisticFitInput.DesignRow(row, i, nameof(rows));
            if (labels[i] < 0 || labels[i] >= classCount)
            {
                throw new ArgumentException($"Label {i} is {labels[i]}; labels must be class indexes from 0 to {classCount - 1}.", nameof(labels));
            }

            counts[labels[i]]++;
        }

        if (featureNames is not null && featureNames.Count != features)
        {
            throw new ArgumentException($"There are {featureNames.Count} feature names for {features} features; give one name per feature.", nameof(featureNames));
        }

        int width = features + 1;
        int size = (classCount - 1) * width;
        double nullLogLikelihood = 0;
        for (int k = 0; k < classCount; k++)
        {
            nullLogLikelihood += counts[k] > 0 ? counts[k] * Math.Log(counts[k] / rows.Count) : 0;
        }

        int empty = Array.IndexOf(counts, 0.0);
        if (empty >= 0)
        {
            return Unfitted(classCount, features, nullLogLikelihood, ridge,
                $"class {empty} has no rows, so its intercept has no finite estimate; the fit needs rows of every class");
        }

        // Start at the intercepts-only maximum: b_k = ln(n_k / n_0), coefficients 0.
        Vector<double> beta = Vector<double>.Build.Dense(size);
        for (int k = 1; k < classCount; k++)
        {
            beta[(k - 1) * width] = Math.Log(counts[k] / counts[0]);
        }

        double objective = Objective(x, labels, classCount, beta, ridge);
        int iterations = 0;
        string? problem = null;
        bool converged = false;
        while (true)
        {
            if (iterations == maxIterations)
            {
                problem = $"no convergence after {maxIterations} Newton steps; the classes may be separated by the features (add ridge (L2)), or standardize features whose scales differ widely";
                break;
            }

            (Matrix<double> hessian, Vector<double> gradient) = NewtonSystem(x, labels, classCount, beta, ridge);
            Cholesky<double>? factor = HessianFactor.TryFactor(hessian, out int singular);
            if (factor is null)
            {
                problem = SingularMessage(x, labels, classCount, ridge, singular, width, featureNames);
                break;
            }

            Vector<double> step = factor.Solve(gradient);
            double slack = 1e-12 * (1 + Math.Abs(objective));
            double scale = 1.0;
            Vector<double> candidate = beta + step;
            double candidateObjective = Objective(x, labels, classCount, candidate, ridge);
            for (int h = 0; !(candidateObjective >= objective - slack) && h < MaxHalvings; h++)
            {
                scale *= 0.5;
                candidate = beta + (scale * step);
                candidateObjective = Objective(x, labels, classCount, candidate, ridge);
            }

            if (!(candidateObjective >= objective - slack))
            {
                converged = gradient.DotProduct(step) <= tolerance * (1 + Math.Abs(objective));
                problem = "the log-likelihood stopped increasing before the fit converged; standardize the features or add ridge (L2)";
                break;
            }

            iterations++;
            double largestMove = 0;
            for (int j = 0; j < size; j++)
            {
                largestMove = Math.Max(largestMove, Math.Abs(candidate[j] - beta[j]) / (1 + Math.Abs(candidate[j])));
            }

            beta = candidate;
            objective = candidateObjective;
            if (largestMove <= tolerance)
            {
                converged = true;
                break;
            }
        }

        return Summarize(x, labels, classCount, beta, ridge, nullLogLikelihood, iterations, converged ? null : problem);
    }

    /// <summary>Turns margins into probabilities in place, exp(η_k − max) / Σ exp(η_l − max), so no exponent overflows.</summary>
    /// <param name="values">The margins; on return the probabilities, summing to 1.</param>
    public static void Softmax(Span<double> values)
    {
        double max = double.NegativeInfinity;
        foreach (double v in values)
        {
            max = Math.Max(max, v);
        }

        double sum = 0;
        for (int k = 0; k < values.Length; k++)
        {
            values[k] = Math.Exp(values[k] - max);
            sum += values[k];
        }

        for (int k = 0; k < values.Length; k++)
        {
            values[k] /= sum;
        }
    }

    // Fills p with the class probabilities of row x at beta and returns the log of the row's own class's probability.
    private static double Row(double[] x, int label, int classCount, Vector<double> beta, Span<double> p)
    {
        int width = x.Length;
        p[0] = 0;
        double max = 0;
        for (int k = 1; k < classCount; k++)
        {
            double eta = 0;
            int offset = (k - 1) * width;
            for (int j = 0; j < width; j++)
            {
                eta += x[j] * beta[offset + j];
            }

            p[k] = eta;
            max = Math.Max(max, eta);
        }

        double sum = 0;
        for (int k = 0; k < classCount; k++)
        {
            sum += Math.Exp(p[k] - max);
        }

        double logNormalizer = max + Math.Log(sum);
        double own = p[label] - logNormalizer;
        for (int k = 0; k < classCount; k++)
        {
            p[k] = Math.Exp(p[k] - logNormalizer);
        }

        return own;
    }

    private static double Objective(double[][] x, IReadOnlyList<int> labels, int classCount, Vector<double> beta, double ridge)
    {
        Span<double> p = stackalloc double[classCount];
        double sum = 0;
        for (int i = 0; i < x.Length; i++)
        {
            sum += Row(x[i], labels[i], classCount, beta, p);
        }

        return sum - (0.5 * ridge * PenaltySquares(beta, x[0].Length));
    }

    private static double PenaltySquares(Vector<double> beta, int width)
    {
        double squares = 0;
        for (int j = 0; j < beta.Count; j++)
        {
            if (j % width != 0)
            {
                squares += beta[j] * beta[j];
            }
        }

        return squares;
    }

    private static (Matrix<double> Hessian, Vector<double> Gradient) NewtonSystem(
        double[][] x, IReadOnlyList<int> labels, int classCount, Vector<double> beta, double ridge)
    {
        int width = x[0].Length;
        int size = beta.Count;
        var h = new double[size, size];
        var g = new double[size];
        Span<double> p = stackalloc double[classCount];
        for (int i = 0; i < x.Length; i++)
        {
            Row(x[i], labels[i], classCount, beta, p);
            double[] row = x[i];
            for (int k = 1; k < classCount; k++)
            {
                int ok = (k - 1) * width;
                double residual = (labels[i] == k ? 1.0 : 0.0) - p[k];
                for (int a = 0; a < width; a++)
                {
                    g[ok + a] += residual * row[a];
                }

                // Lower triangle only: blocks l ≤ k, and within the diagonal block b ≤ a.
                for (int l = 1; l <= k; l++)
                {
                    int ol = (l - 1) * width;
                    double w = p[k] * ((k == l ? 1.0 : 0.0) - p[l]);
                    for (int a = 0; a < width; a++)
                    {
                        double wa = w * row[a];
                        int limit = k == l ? a : width - 1;
                        for (int b = 0; b <= limit; b++)
                        {
                            h[ok + a, ol + b] += wa * row[b];
                        }
                    }
                }
            }
        }

        for (int a = 0; a < size; a++)
        {
            for (int b = 0; b < a; b++)
            {
                h[b, a] = h[a, b];
            }
        }

        for (int j = 0; j < size; j++)
        {
            if (j % width != 0)
            {
                h[j, j] += ridge;
                g[j] -= ridge * beta[j];
            }
        }

        return (Matrix<double>.Build.DenseOfArray(h), Vector<double>.Build.Dense(g));
    }

    private static MultinomialFitResult Summarize(
        double[][] x, IReadOnlyList<int> labels, int classCount, Vector<double> beta, double ridge, double nullLogLikelihood, int iterations, string? problem)
    {
        int width = x[0].Length;
        (Matrix<double> hessian, _) = NewtonSystem(x, labels, classCount, beta, ridge);
        var se = new double[beta.Count];
        Cholesky<double>? factor = HessianFactor.TryFactor(hessian, out _);
        if (factor is null)
        {
            Array.Fill(se, double.NaN);
        }
        else
        {
            Matrix<double> covariance = factor.Solve(Matrix<double>.Build.DenseIdentity(beta.Count));
            for (int j = 0; j < se.Length; j++)
            {
                se[j] = Math.Sqrt(covariance[j, j]);
            }
        }

        var intercepts = new double[classCount];
        var interceptErrors = new double[classCount];
        var coefficients = new double[classCount][];
        var errors = new double[classCount][];
        interceptErrors[0] = double.NaN;
        coefficients[0] = new double[width - 1];
        errors[0] = Enumerable.Repeat(double.NaN, width - 1).ToArray();
        for (int k = 1; k < classCount; k++)
        {
            int o = (k - 1) * width;
            intercepts[k] = beta[o];
            interceptErrors[k] = se[o];
            coefficients[k] = Enumerable.Range(1, width - 1).Select(j => beta[o + j]).ToArray();
            errors[k] = Enumerable.Range(1, width - 1).Select(j => se[o + j]).ToArray();
        }

        return new MultinomialFitResult(intercepts, coefficients, interceptErrors, errors,
            Objective(x, labels, classCount, beta, 0), nullLogLikelihood, iterations, problem is null, problem, ridge);
    }

    private static MultinomialFitResult Unfitted(int classCount, int features, double nullLogLikelihood, double ridge, string problem)
    {
        double[] Nan(int n) => Enumerable.Repeat(double.NaN, n).ToArray();
        return new MultinomialFitResult(Nan(classCount), Enumerable.Range(0, classCount).Select(_ => Nan(features)).ToArray(),
            Nan(classCount), Enumerable.Range(0, classCount).Select(_ => Nan(features)).ToArray(),
            nullLogLikelihood, nullLogLikelihood, 0, false, problem, ridge);
    }

    private static string SingularMessage(double[][] x, IReadOnlyList<int> labels, int classCount, double ridge, int column, int width, IReadOnlyList<string>? names)
    {
        // At equal probabilities every row has the same weights, so a singular matrix there is
        // the design's fault (collinear columns); otherwise the weights collapsed onto rows
        // predicted with certainty, which is what separation does.
        var flat = Vector<double>.Build.Dense((classCount - 1) * width);
        (Matrix<double> uniform, _) = NewtonSystem(x, labels, classCount, flat, ridge);
        if (HessianFactor.TryFactor(uniform, out int collinear) is null)
        {
            int feature = (collinear % width) - 1;
            string what = feature < 0 ? "the intercept" : names is null ? $"feature {feature}" : $"'{names[feature]}'";
            return $"the features are collinear: {what} is constant or a linear combination of the intercept and the features before it, " +
                "so the Hessian is singular and the coefficients are not identified; drop that feature or add ridge (L2)";
        }

        int at = (column % width) - 1;
        string where = at < 0 ? "an intercept" : names is null ? $"feature {at}" : $"'{names[at]}'";
        return $"the Hessian became singular (at {where} of class {(column / width) + 1}): the classes are probably separated by the features; add ridge (L2) or more data";
    }
}
