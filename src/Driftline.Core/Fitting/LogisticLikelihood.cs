using System.Diagnostics;
using MathNet.Numerics.LinearAlgebra;

namespace Driftline.Core.Fitting;

/// <summary>
/// The row-weighted Bernoulli log-likelihood of a logistic model over a fixed design, with its
/// score and negative Hessian: everything a Newton step needs, and the tests for separation.
/// </summary>
/// <remarks>
/// Holds already validated data; <see cref="LogisticNewtonFit"/> checks the caller's input.
/// Column 0 of the design is the intercept's column of ones; the ridge penalty skips it.
/// </remarks>
internal sealed class LogisticLikelihood
{
    // A row whose fitted variance p(1 − p) is below this (|η| above about 23) on the side of
    // its label is predicted with certainty: the signature of separation when a fit fails.
    private const double CertainVariance = 1e-10;

    // A margin counts as strictly separating only if it clears rounding in its own terms.
    private const double SeparatingMarginShare = 1e-8;

    private readonly double[][] _x;
    private readonly double[] _y;
    private readonly double[] _v;

    /// <summary>Wraps a validated design.</summary>
    /// <param name="design">Rows of finite values, all the same length, each starting with 1.</param>
    /// <param name="labels">One label per row, 0 or 1.</param>
    /// <param name="weights">One weight per row, finite and ≥ 0.</param>
    public LogisticLikelihood(double[][] design, double[] labels, double[] weights)
    {
        Debug.Assert(design.Length > 0 && design.Length == labels.Length && design.Length == weights.Length);
        _x = design;
        _y = labels;
        _v = weights;
        for (int i = 0; i < design.Length; i++)
        {
            PositiveWeight += weights[i] * labels[i];
            NegativeWeight += weights[i] * (1 - labels[i]);
        }
    }

    /// <summary>The number of rows.</summary>
    public int RowCount => _x.Length;

    /// <summary>The number of parameters, intercept included.</summary>
    public int Width => _x[0].Length;

    /// <summary>The total weight of rows labelled 1.</summary>
    public double PositiveWeight { get; }

    /// <summary>The total weight of rows labelled 0.</summary>
    public double NegativeWeight { get; }

    /// <summary>
    /// The log-likelihood of the intercept-only model at its maximum, p = positive / total;
    /// 0 when one label has no weight.
    /// </summary>
    public double NullLogLikelihood
    {
        get
        {
            double total = PositiveWeight + NegativeWeight;
            double sum = 0;
            if (PositiveWeight > 0)
            {
                sum += PositiveWeight * Math.Log(PositiveWeight / total);
            }

            if (NegativeWeight > 0)
            {
                sum += NegativeWeight * Math.Log(NegativeWeight / total);
            }

            return sum;
        }
    }

    /// <summary>
    /// The penalized objective Σ v·loglik(η, y) − λ/2·‖w‖² at <paramref name="beta"/>.
    /// </summary>
    /// <param name="beta">Intercept then coefficients.</param>
    /// <param name="ridge">λ ≥ 0; 0 gives the plain log-likelihood.</param>
    /// <param name="eta">Filled with each row's margin; length <see cref="RowCount"/>.</param>
    /// <returns>A finite value ≤ 0 for finite β.</returns>
    public double Objective(Vector<double> beta, double ridge, double[] eta)
    {
        double sum = 0;
        for (int i = 0; i < _x.Length; i++)
        {
            double margin = 0;
            double[] row = _x[i];
            for (int j = 0; j < row.Length; j++)
            {
                margin += row[j] * beta[j];
            }

            eta[i] = margin;
            if (_v[i] != 0)
            {
                sum += _v[i] * LogisticMath.LogLikelihood(margin, _y[i]);
            }
        }

        if (ridge > 0)
        {
            double squares = 0;
            for (int j = 1; j < beta.Count; j++)
            {
                squares += beta[j] * beta[j];
            }

            sum -= 0.5 * ridge * squares;
        }

        return sum;
    }

    /// <summary>
    /// The negative Hessian X'WX + λD and the score X'V(y − p) − λDβ of the objective.
    /// </summary>
    /// <param name="beta">The point, intercept first.</param>
    /// <param name="eta">The margins at <paramref name="beta"/>, as <see cref="Objective"/> filled them.</param>
    /// <param name="ridge">λ ≥ 0.</param>
    /// <returns>An exactly symmetric matrix and the gradient, both of size <see cref="Width"/>.</returns>
    public (Matrix<double> Hessian, Vector<double> Gradient) NewtonSystem(Vector<double> beta, double[] eta, double ridge)
    {
        int width = beta.Count;
        var h = new double[width, width];
        var g = new double[width];
        for (int i = 0; i < _x.Length; i++)
        {
            if (_v[i] == 0)
            {
                continue;
            }

            // y − p written as the probability of the other label, which keeps its digits when
            // p is within rounding of 1.
            double residual = _y[i] == 1 ? LogisticMath.Probability(-eta[i]) : -LogisticMath.Probability(eta[i]);
            double r = _v[i] * residual;
            double w = _v[i] * LogisticMath.Variance(eta[i]);
            double[] row = _x[i];
            for (int a = 0; a < width; a++)
            {
                g[a] += r * row[a];
                double wa = w * row[a];
                for (int b = 0; b <= a; b++)
                {
                    h[a, b] += wa * row[b];
                }
            }
        }

        // Filled from one triangle so the matrix is symmetric to the last bit.
        for (int a = 0; a < width; a++)
        {
            for (int b = 0; b < a; b++)
            {
                h[b, a] = h[a, b];
            }
        }

        for (int j = 1; j < width; j++)
        {
            h[j, j] += ridge;
            g[j] -= ridge * beta[j];
        }

        return (Matrix<double>.Build.DenseOfArray(h), Vector<double>.Build.Dense(g));
    }

    /// <summary>
    /// True when every weighted row lies strictly on the side of its label at
    /// <paramref name="beta"/>: scaling β up then drives the log-likelihood to 0, so no finite
    /// maximum exists. A proof of complete separation, not a guess.
    /// </summary>
    /// <param name="beta">The point, intercept first.</param>
    /// <param name="eta">The margins at <paramref name="beta"/>.</param>
    /// <returns>False whenever any margin is within rounding of 0 or on the wrong side.</returns>
    public bool SeparatesStrictly(Vector<double> beta, double[] eta)
    {
        for (int i = 0; i < _x.Length; i++)
        {
            if (_v[i] == 0)
            {
                continue;
            }

            double size = 0;
            double[] row = _x[i];
            for (int j = 0; j < row.Length; j++)
            {
                size += Math.Abs(row[j] * beta[j]);
            }

            double margin = _y[i] == 1 ? eta[i] : -eta[i];
            if (!(margin > SeparatingMarginShare * size))
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>
    /// True when some weighted row is predicted with certainty (p(1 − p) below 1e−10) on the
    /// side of its label: what a fit that stalls on quasi-complete separation looks like.
    /// </summary>
    /// <param name="eta">The margins.</param>
    /// <returns>Whether any such row exists.</returns>
    public bool HasCertainRows(double[] eta)
    {
        for (int i = 0; i < eta.Length; i++)
        {
            bool onItsSide = _y[i] == 1 ? eta[i] > 0 : eta[i] < 0;
            if (_v[i] > 0 && onItsSide && LogisticMath.Variance(eta[i]) < CertainVariance)
            {
                return true;
            }
        }

        return false;
    }
}
