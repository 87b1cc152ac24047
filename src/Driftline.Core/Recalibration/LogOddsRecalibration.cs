using Driftline.Core.Metrics;

namespace Driftline.Core.Recalibration;

/// <summary>
/// A live correction of one model's probabilities: p' = σ(a + b · logit p), the calibration
/// intercept and slope of Cox (1958), "Two Further Applications of a Model for Binary
/// Regression", Biometrika 45, fitted online from graded labels with forgetting.
/// </summary>
/// <remarks>
/// <para>
/// The fit minimises, at each label t, the forgotten log-loss Σ γ^(t−i) ℓ_i(a, b) plus a
/// Gaussian prior (λ/2)·‖(a, b) − (0, 1)‖², with γ = 2^(−1/half-life). Past labels enter through
/// the quadratic expansion of their part of the objective at the previous optimum (curvature D,
/// decayed by γ each label), so a label costs two Newton steps on a 2 × 2 system: O(1), no
/// window. This is the recursive form of iteratively reweighted least squares; with γ = 1 and a
/// weak prior it tracks the batch maximum-likelihood fit (see the statsmodels check in the tests).
/// </para>
/// <para>
/// Because the prior is not forgotten, a calibrated stream leaves the pair near (0, 1), and a
/// few labels cannot move it far. The slope is held within the configured range, the intercept
/// within ±20; a label whose update is not finite is ignored (the pair stays as it was).
/// </para>
/// <para>
/// Progressive: <see cref="Apply(double)"/> uses only labels given to <see cref="Learn(double, int)"/> before it.
/// The correction fixes calibration, not ranking: for b &gt; 0 it is monotone, so the order of
/// the predictions (and AUC) is unchanged.
/// </para>
/// </remarks>
internal sealed class LogOddsRecalibration : IRecalibration
{
    private const double InterceptBound = 20;
    private const int NewtonSteps = 2;

    private readonly RecalibrationOptions _options;
    private readonly double _decay;
    private double _a;
    private double _b = 1;
    private double _haa, _hab, _hbb;
    private bool _engaged;

    /// <summary>Starts with no correction (a = 0, b = 1).</summary>
    public LogOddsRecalibration(RecalibrationOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _options = options;
        _decay = Math.Pow(2.0, -1.0 / options.HalfLife);
        _engaged = options.Mode == RecalibrationMode.Always;
    }

    /// <summary>Fitted calibration intercept a.</summary>
    public double Intercept => _a;

    /// <summary>Fitted calibration slope b.</summary>
    public double Slope => _b;

    /// <summary>Labels learned from.</summary>
    public long Labels { get; private set; }

    /// <summary>
    /// Whether <see cref="Apply(double)"/> corrects: from <see cref="RecalibrationOptions.MinLabels"/> labels on,
    /// always for <see cref="RecalibrationMode.Always"/>, and while a calibration rule holds it for
    /// <see cref="RecalibrationMode.OnAlert"/>.
    /// </summary>
    public bool Serving => _engaged && Labels >= _options.MinLabels;

    /// <summary>Labels graded since a calibration rule of this model was last seen raised.</summary>
    public long ClearStreak { get; private set; }

    /// <summary>The probability to serve for the model's own <paramref name="p"/>.</summary>
    public double Apply(double p) => Serving ? Correct(p) : p;

    /// <inheritdoc/>
    public IReadOnlyList<(double Intercept, double Slope)> Parameters => [(_a, _b)];

    /// <inheritdoc/>
    public void Apply(ReadOnlySpan<double> raw, Span<double> served) => served[0] = Apply(raw[0]);

    /// <inheritdoc/>
    public void Learn(ReadOnlySpan<double> raw, int y) => Learn(raw[0], y);

    /// <summary>σ(a + b · logit p), whether or not the correction is being served.</summary>
    public double Correct(double p) => Sigmoid(_a + _b * CalibrationSlope.Logit(p));

    /// <summary>Updates the fit with one graded prediction: the model's own p and the outcome y (0 or 1).</summary>
    public void Learn(double p, int y)
    {
        double z = CalibrationSlope.Logit(p);
        double lambda = _options.PriorWeight;
        double a0 = _a, b0 = _b;
        // The previous optimum's data gradient is −λ(θ_prev − θ0) (the total gradient was zero),
        // forgotten by γ like the curvature; the prior itself is not forgotten.
        double daa = _decay * _haa, dab = _decay * _hab, dbb = _decay * _hbb;
        double a = a0, b = b0;
        for (int step = 0; step < NewtonSteps; step++)
        {
            double q = Sigmoid(a + b * z);
            double r = q - y;
            double w = q * (1 - q);
            double ga = daa * (a - a0) + dab * (b - b0) - _decay * lambda * a0 + lambda * a + r;
            double gb = dab * (a - a0) + dbb * (b - b0) - _decay * lambda * (b0 - 1) + lambda * (b - 1) + r * z;
            double haa = daa + lambda + w;
            double hab = dab + w * z;
            double hbb = dbb + lambda + w * z * z;
            double det = haa * hbb - hab * hab;
            if (!(det > 0) || !double.IsFinite(det))
            {
                return;
            }
            a -= (hbb * ga - hab * gb) / det;
            b -= (haa * gb - hab * ga) / det;
        }
        a = Math.Clamp(a, -InterceptBound, InterceptBound);
        b = Math.Clamp(b, _options.MinSlope, _options.MaxSlope);
        double qNew = Sigmoid(a + b * z);
        double wNew = qNew * (1 - qNew);
        double naa = daa + wNew, nab = dab + wNew * z, nbb = dbb + wNew * z * z;
        if (!double.IsFinite(a) || !double.IsFinite(b) || !double.IsFinite(naa + nab + nbb))
        {
            return;
        }
        _a = a;
        _b = b;
        _haa = naa;
        _hab = nab;
        _hbb = nbb;
        Labels++;
    }

    /// <summary>
    /// For <see cref="RecalibrationMode.OnAlert"/>, after each graded label: whether any calibration
    /// rule of this model is raised now. Serving starts at a raise and stops once the rules have
    /// been clear for <see cref="RecalibrationOptions.ClearLabels"/> labels.
    /// </summary>
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

    /// <summary>The state to checkpoint.</summary>
    public RecalibrationState Export() => new(_a, _b, [_haa, _hab, _hbb], Labels, _engaged, ClearStreak);

    /// <summary>Restores a state written by <see cref="Export"/>; the options must be the same to continue exactly.</summary>
    /// <exception cref="ArgumentException">The state is damaged: wrong curvature length, numbers not finite, or the slope out of range.</exception>
    public void Import(RecalibrationState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        if (state.Curvature is not { Length: 3 } h || state.Intercepts is not null || state.Slopes is not null || !double.IsFinite(state.Intercept) || !double.IsFinite(state.Slope)
            || !h.All(double.IsFinite) || h[0] < 0 || h[2] < 0 || state.Labels < 0 || state.ClearStreak < 0
            || Math.Abs(state.Intercept) > InterceptBound || state.Slope < _options.MinSlope || state.Slope > _options.MaxSlope)
        {
            throw new ArgumentException("the recalibration state is damaged: it needs a finite intercept within ±20, a slope within the configured range and three finite curvature terms", nameof(state));
        }
        _a = state.Intercept;
        _b = state.Slope;
        (_haa, _hab, _hbb) = (h[0], h[1], h[2]);
        Labels = state.Labels;
        _engaged = _options.Mode == RecalibrationMode.Always || (_options.Mode == RecalibrationMode.OnAlert && state.Engaged);
        ClearStreak = state.ClearStreak;
    }

    private static double Sigmoid(double x) => x >= 0 ? 1.0 / (1.0 + Math.Exp(-x)) : Math.Exp(x) / (1.0 + Math.Exp(x));
}
