using Driftline.Core.Options;

namespace Driftline.Core.Learning;

/// <summary>
/// FTRL-Proximal with per-coordinate rates, L1 and L2: McMahan et al. 2013, "Ad Click
/// Prediction: a View from the Trenches", Algorithm 1. The weight of a slot is computed from
/// its statistics z and n when read, so L1 gives exact zeros and an untouched slot costs
/// nothing.
/// </summary>
/// <remarks>
/// Forgetting discounts every term of the FTRL objective alike: the linearised losses and the
/// proximal terms ½σ_s‖w − w_s‖² of past steps count γ^(t−s), only the β/α smoothing does not.
/// The closed form is then w = −(z − sgn(z)λ1) / (β/α + S + λ2), with z = Σγ(g − σw) as usual
/// and S = Σγσ kept per slot. Without forgetting S = √n/α and this is McMahan's formula; with
/// it, using √n/α in place of S would pull every weight towards zero (the centring mass in z
/// is discounted but √n is not a discounted sum of σ), which shows as under-confident
/// probabilities.
/// </remarks>
internal sealed class FtrlProximalLearner : OnlineLearner
{
    private readonly double _alpha;
    private readonly double _beta;
    private readonly double _l1;
    private readonly double _l2;
    private readonly double[] _z;
    private readonly double[] _n;
    private readonly double[] _sigma;

    /// <summary>Creates an untrained learner.</summary>
    public FtrlProximalLearner(ModelOptions options) : base(options)
    {
        _alpha = options.LearningRate;
        _beta = options.RateSmoothing;
        _l1 = options.L1;
        _l2 = options.L2;
        _z = new double[Size];
        _n = new double[Size];
        _sigma = new double[Size];
    }

    /// <inheritdoc />
    public override double Weight(int slot)
    {
        double inflation = Inflation;
        double z = _z[slot] / inflation;
        if (Math.Abs(z) <= _l1)
        {
            return 0;
        }
        double sigma = _sigma[slot] / inflation;
        return -(z - Math.Sign(z) * _l1) / (_beta / _alpha + sigma + _l2);
    }

    /// <inheritdoc />
    protected override void Step(int slot, double g)
    {
        double inflation = Inflation;
        double w = Weight(slot);
        double n = _n[slot] / inflation;
        double sigma = (Math.Sqrt(n + g * g) - Math.Sqrt(n)) / _alpha;
        _z[slot] += (g - sigma * w) * inflation;
        _n[slot] += g * g * inflation;
        _sigma[slot] += sigma * inflation;
    }

    /// <inheritdoc />
    protected override void Renormalise(double factor)
    {
        for (int i = 0; i < _z.Length; i++)
        {
            _z[i] *= factor;
            _n[i] *= factor;
            _sigma[i] *= factor;
        }
    }

    /// <inheritdoc />
    public override LearnerState Export()
    {
        var slots = TouchedSlots(_z, _n);
        return new LearnerState
        {
            Slots = slots,
            First = slots.Select(i => _z[i]).ToArray(),
            Second = slots.Select(i => _n[i]).ToArray(),
            Third = slots.Select(i => _sigma[i]).ToArray(),
            Inflation = Inflation,
            Updates = Updates,
            RefusedUpdates = RefusedUpdates,
        };
    }

    /// <inheritdoc />
    public override void Import(LearnerState state)
    {
        RestoreCounters(state);
        Array.Clear(_z);
        Array.Clear(_n);
        Array.Clear(_sigma);
        for (int i = 0; i < state.Slots.Length; i++)
        {
            _z[state.Slots[i]] = state.First[i];
            _n[state.Slots[i]] = state.Second[i];
            _sigma[state.Slots[i]] = state.Third[i];
        }
    }
}
