using Driftline.Core.Metrics;

namespace Driftline.Core.Recalibration;

/// <summary>
/// A live correction of a K-class model's probabilities by vector scaling (Guo, Pleiss, Sun &amp;
/// Weinberger 2017, "On Calibration of Modern Neural Networks", ICML): z'_k = b_k · ln p_k + a_k,
/// p' = softmax(z'), one intercept and one slope per class, fitted online from graded labels
/// with forgetting. It is the multiclass form of <see cref="LogOddsRecalibration"/>.
/// </summary>
/// <remarks>
/// <para>
/// The fit is the same recursive Newton scheme as the binary correction, over the 2K parameters
/// θ = (a_0 … a_{K−1}, b_0 … b_{K−1}): at each label t it minimises the forgotten multiclass
/// log-loss Σ γ^(t−i) ℓ_i(θ) plus a Gaussian prior (λ/2)·‖θ − θ0‖² towards no correction
/// (a = 0, b = 1), with γ = 2^(−1/half-life). Past labels enter through the quadratic expansion
/// of their part at the previous optimum (the full 2K × 2K curvature, decayed by γ each label),
/// so a label costs two Newton steps on a 2K × 2K system. The softmax leaves the a only defined up
/// to a common shift; the prior, which is not forgotten, pins that direction and keeps a
/// calibrated stream near no correction.
/// </para>
/// <para>
/// The slopes are held within the configured range, the intercepts within ±20; a label whose
/// update is not finite is ignored. The softmax renormalises: the served probabilities sum to 1.
/// Progressive: <see cref="Apply"/> uses only labels given to <see cref="Learn"/> before it.
/// Unlike the binary correction, different slopes per class can reorder the classes of one
/// prediction; it still fixes calibration, not the model's ability to tell the classes apart.
/// </para>
/// </remarks>
internal sealed class VectorScaling : IRecalibration
{
    private const double InterceptBound = 20;
    private const int NewtonSteps = 2;

    private readonly RecalibrationOptions _options;
    private readonly double _decay;
    private readonly int _classes;
    private readonly int _n;
    // θ: a in [0, K), b in [K, 2K); the curvature row by row.
    private readonly double[] _theta;
    private readonly double[] _curvature;
    // Scratch for Learn, reused so a label allocates nothing.
    private readonly double[] _u, _q, _t, _g, _h, _decayed;
    private bool _engaged;

    /// <summary>Starts with no correction (every a_k = 0, b_k = 1) for <paramref name="classes"/> classes.</summary>
    public VectorScaling(RecalibrationOptions options, int classes)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentOutOfRangeException.ThrowIfLessThan(classes, 2);
        _options = options;
        _decay = Math.Pow(2.0, -1.0 / options.HalfLife);
        _classes = classes;
        _n = 2 * classes;
        _theta = new double[_n];
        _theta.AsSpan(classes).Fill(1);
        _curvature = new double[_n * _n];
        _u = new double[classes];
        _q = new double[classes];
        _t = new double[_n];
        _g = new double[_n];
        _h = new double[_n * _n];
        _decayed = new double[_n * _n];
        _engaged = options.Mode == RecalibrationMode.Always;
    }

    /// <inheritdoc/>
    public bool Serving => _engaged && Labels >= _options.MinLabels;

    /// <inheritdoc/>
    public long Labels { get; private set; }

    /// <inheritdoc/>
    public long ClearStreak { get; private set; }

    /// <inheritdoc/>
    public IReadOnlyList<(double Intercept, double Slope)> Parameters =>
        Enumerable.Range(0, _classes).Select(k => (_theta[k], _theta[_classes + k])).ToArray();

    /// <inheritdoc/>
    public void Apply(ReadOnlySpan<double> raw, Span<double> served)
    {
        if (!Serving)
        {
            raw.CopyTo(served);
            return;
        }
        Correct(raw, served);
    }

    /// <summary>softmax(b · ln p + a), whether or not the correction is being served.</summary>
    public void Correct(ReadOnlySpan<double> raw, Span<double> served)
    {
        for (int k = 0; k < _classes; k++)
        {
            served[k] = _theta[_classes + k] * Log(raw[k]) + _theta[k];
        }
        Softmax(served);
    }

    /// <inheritdoc/>
    public void Learn(ReadOnlySpan<double> raw, int y)
    {
        int k = _classes, n = _n;
        if (raw.Length != k || (uint)y >= (uint)k)
        {
            throw new ArgumentException($"vector scaling over {k} classes needs {k} probabilities and a class index below {k}");
        }
        for (int c = 0; c < k; c++)
        {
            _u[c] = Log(raw[c]);
        }
        double lambda = _options.PriorWeight;
        for (int i = 0; i < _decayed.Length; i++)
        {
            _decayed[i] = _decay * _curvature[i];
        }
        var t = _t;
        _theta.CopyTo(t, 0);
        for (int step = 0; step < NewtonSteps; step++)
        {
            Probabilities(t);
            // The previous optimum's data gradient is −λ(θ_prev − θ0) (the total was zero),
            // forgotten by γ like the curvature; the prior itself is not forgotten.
            for (int i = 0; i < n; i++)
            {
                double identity = i < k ? 0 : 1;
                double sum = 0;
                for (int j = 0; j < n; j++)
                {
                    sum += _decayed[i * n + j] * (t[j] - _theta[j]);
                }
                int c = i < k ? i : i - k;
                double r = _q[c] - (c == y ? 1 : 0);
                _g[i] = sum - _decay * lambda * (_theta[i] - identity) + lambda * (t[i] - identity) + (i < k ? r : r * _u[c]);
            }
            _decayed.CopyTo(_h, 0);
            AddLabelCurvature(_h);
            for (int i = 0; i < n; i++)
            {
                _h[i * n + i] += lambda;
            }
            if (!CholeskySolve(_h, _g, n))
            {
                return;
            }
            for (int i = 0; i < n; i++)
            {
                t[i] -= _g[i];
            }
        }
        for (int c = 0; c < k; c++)
        {
            t[c] = Math.Clamp(t[c], -InterceptBound, InterceptBound);
            t[k + c] = Math.Clamp(t[k + c], _options.MinSlope, _options.MaxSlope);
        }
        Probabilities(t);
        _decayed.CopyTo(_h, 0);
        AddLabelCurvature(_h);
        if (!t.All(double.IsFinite) || !_h.All(double.IsFinite))
        {
            return;
        }
        t.CopyTo(_theta, 0);
        _h.CopyTo(_curvature, 0);
        Labels++;
    }

    /// <inheritdoc/>
    public void ObserveRules(bool anyRaised)
    {
        if (anyRaised)
        {
            ClearStreak = 0;
            _engaged = true;
            return;
        }
        ClearStreak++;
        if (_options.Mode == RecalibrationMode.OnAlert && _engaged && ClearStreak >= _options.ClearLabels)
        {
            _engaged = false;
        }
    }

    /// <inheritdoc/>
    public RecalibrationState Export() => new(_theta[0], _theta[_classes], (double[])_curvature.Clone(), Labels, _engaged, ClearStreak,
        _theta[.._classes], _theta[_classes..]);

    /// <inheritdoc/>
    /// <exception cref="ArgumentException">
    /// The state is damaged: not K intercepts and slopes, not a 2K × 2K curvature, numbers not
    /// finite, an intercept beyond ±20 or a slope out of range.
    /// </exception>
    public void Import(RecalibrationState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        int k = _classes;
        bool ok = state.Intercepts is { } a && state.Slopes is { } b && a.Length == k && b.Length == k
            && state.Curvature is { } h && h.Length == _n * _n && h.All(double.IsFinite)
            && a.All(x => double.IsFinite(x) && Math.Abs(x) <= InterceptBound)
            && b.All(x => double.IsFinite(x) && x >= _options.MinSlope && x <= _options.MaxSlope)
            && state.Intercept == a[0] && state.Slope == b[0]
            && Enumerable.Range(0, _n).All(i => h[i * _n + i] >= 0)
            && state.Labels >= 0 && state.ClearStreak >= 0;
        if (!ok)
        {
            throw new ArgumentException($"the recalibration state is damaged: vector scaling over {k} classes needs {k} finite intercepts within ±20, {k} slopes within the configured range and a {_n} × {_n} finite curvature", nameof(state));
        }
        state.Intercepts!.CopyTo(_theta, 0);
        state.Slopes!.CopyTo(_theta, k);
        state.Curvature.CopyTo(_curvature, 0);
        Labels = state.Labels;
        _engaged = _options.Mode == RecalibrationMode.Always || (_options.Mode == RecalibrationMode.OnAlert && state.Engaged);
        ClearStreak = state.ClearStreak;
    }

    // q = softmax(b · u + a) at θ = t.
    private void Probabilities(double[] t)
    {
        for (int c = 0; c < _classes; c++)
        {
            _q[c] = t[_classes + c] * _u[c] + t[c];
        }
        Softmax(_q);
    }

    // Adds this label's Hessian Jᵀ S J at the current q: S = diag(q) − q qᵀ is the softmax
    // curvature in z', and z'_c moves by 1 with a_c and by u_c with b_c.
    private void AddLabelCurvature(double[] h)
    {
        int k = _classes, n = _n;
        for (int i = 0; i < k; i++)
        {
            for (int j = 0; j < k; j++)
            {
                double s = _q[i] * ((i == j ? 1 : 0) - _q[j]);
                h[i * n + j] += s;
                h[i * n + k + j] += s * _u[j];
                h[(k + i) * n + j] += _u[i] * s;
                h[(k + i) * n + k + j] += _u[i] * s * _u[j];
            }
        }
    }

    // Solves H x = g in place (x replaces g) for a symmetric H, by Cholesky; false if H is not
    // positive definite or the numbers are not finite.
    private static bool CholeskySolve(double[] h, double[] g, int n)
    {
        for (int j = 0; j < n; j++)
        {
            double d = h[j * n + j];
            for (int m = 0; m < j; m++)
            {
                d -= h[j * n + m] * h[j * n + m];
            }
            if (!(d > 0) || !double.IsFinite(d))
            {
                return false;
            }
            d = Math.Sqrt(d);
            h[j * n + j] = d;
            for (int i = j + 1; i < n; i++)
            {
                double s = h[i * n + j];
                for (int m = 0; m < j; m++)
                {
                    s -= h[i * n + m] * h[j * n + m];
                }
                h[i * n + j] = s / d;
            }
        }
        for (int i = 0; i < n; i++)
        {
            double s = g[i];
            for (int m = 0; m < i; m++)
            {
                s -= h[i * n + m] * g[m];
            }
            g[i] = s / h[i * n + i];
        }
        for (int i = n - 1; i >= 0; i--)
        {
            double s = g[i];
            for (int m = i + 1; m < n; m++)
            {
                s -= h[m * n + i] * g[m];
            }
            g[i] = s / h[i * n + i];
        }
        return true;
    }

    private static double Log(double p) => Math.Log(Math.Max(p, PredictionScores.LogLossEpsilon));

    private static void Softmax(Span<double> z)
    {
        double max = double.NegativeInfinity;
        foreach (double v in z)
        {
            max = Math.Max(max, v);
        }
        double sum = 0;
        for (int c = 0; c < z.Length; c++)
        {
            z[c] = Math.Exp(z[c] - max);
            sum += z[c];
        }
        for (int c = 0; c < z.Length; c++)
        {
            z[c] /= sum;
        }
    }
}
