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
    private double[] _z;
    private double[] _n;
    private double[] _sigma;

    /// <summary>Creates an untrained learner.</summary>
    public FtrlProximalLearner(ModelOptions options) : base(options)
    {
        _alpha = options.LearningRate;
        _beta = options.RateSmoothing;
        _l1 = options.L1;
        _l2 = options.L2;
        _z = new double[Written.Capacity * Outputs];
        _n = new double[Written.Capacity * Outputs];
        _sigma = new double[Written.Capacity * Outputs];
    }

    /// <inheritdoc />
    protected override double WeightAt(int index)
    {
        double inflation = Inflation;
        double z = _z[index] / inflation;
        if (Math.Abs(z) <= _l1)
        {
            return 0;
        }
        double sigma = _sigma[index] / inflation;
        return -(z - Math.Sign(z) * _l1) / (_beta / _alpha + sigma + _l2);
    }

    /// <inheritdoc />
    protected override void Step(int index, double g)
    {
        double inflation = Inflation;
        double w = WeightAt(index);
        double n = _n[index] / inflation;
        double sigma = (Math.Sqrt(n + g * g) - Math.Sqrt(n)) / _alpha;
        _z[index] += (g - sigma * w) * inflation;
        _n[index] += g * g * inflation;
        _sigma[index] += sigma * inflation;
    }

    /// <inheritdoc />
    protected override void Resize(int capacity)
    {
        Array.Resize(ref _z, capacity);
        Array.Resize(ref _n, capacity);
        Array.Resize(ref _sigma, capacity);
    }

    /// <inheritdoc />
    protected override void Renormalise(double factor, int count)
    {
        for (int i = 0; i < count; i++)
        {
            _z[i] *= factor;
            _n[i] *= factor;
            _sigma[i] *= factor;
        }
    }

    /// <inheritdoc />
    public override LearnerState Export()
    {
        var positions = SnapshotPositions(_z, _n);
        return new LearnerState
        {
            Slots = SlotsAt(positions),
            First = EntriesAt(positions, _z),
            Second = EntriesAt(positions, _n),
            Third = EntriesAt(positions, _sigma),
            Inflation = Inflation,
            Updates = Updates,
            RefusedUpdates = RefusedUpdates,
        };
    }

    /// <inheritdoc />
    public override void Import(LearnerState state)
    {
        RestoreCounters(state, statistics: 3);
        Array.Clear(_z);
        Array.Clear(_n);
        Array.Clear(_sigma);
        // RestoreCounters gave the i-th saved slot position i.
        state.First.CopyTo(_z, 0);
        state.Second.CopyTo(_n, 0);
        state.Third.CopyTo(_sigma, 0);
    }
}
