using Driftline.Core.Options;

namespace Driftline.Core.Learning;

/// <summary>
/// Stochastic gradient descent with AdaGrad's per-coordinate rates: Duchi, Hazan &amp; Singer
/// 2011, "Adaptive Subgradient Methods for Online Learning and Stochastic Optimization". The
/// step of a slot is α / (β + √G) with G its sum of squared gradients. With forgetting, G is
/// discounted (see <see cref="OnlineLearner"/>), so the rate settles at a level set by the
/// half-life instead of decaying to zero; the weights themselves are not shrunk.
/// </summary>
internal sealed class AdaGradLearner : OnlineLearner
{
    private readonly double _alpha;
    private readonly double _beta;
    private readonly double _l2;
    private readonly double[] _w;
    private readonly double[] _g2;

    /// <summary>Creates an untrained learner.</summary>
    public AdaGradLearner(ModelOptions options) : base(options)
    {
        _alpha = options.LearningRate;
        _beta = options.RateSmoothing;
        _l2 = options.L2;
        _w = new double[Size];
        _g2 = new double[Size];
    }

    /// <inheritdoc />
    public override double Weight(int slot) => _w[slot];

    /// <inheritdoc />
    protected override void Step(int slot, double g)
    {
        g += _l2 * _w[slot];
        double inflation = Inflation;
        _g2[slot] += g * g * inflation;
        _w[slot] -= _alpha * g / (_beta + Math.Sqrt(_g2[slot] / inflation));
    }

    /// <inheritdoc />
    protected override void Renormalise(double factor)
    {
        for (int i = 0; i < _g2.Length; i++)
        {
            _g2[i] *= factor;
        }
    }

    /// <inheritdoc />
    public override LearnerState Export()
    {
        var slots = TouchedSlots(_w, _g2);
        return new LearnerState
        {
            Slots = slots,
            First = slots.Select(i => _w[i]).ToArray(),
            Second = slots.Select(i => _g2[i]).ToArray(),
            Inflation = Inflation,
            Updates = Updates,
            RefusedUpdates = RefusedUpdates,
        };
    }

    /// <inheritdoc />
    public override void Import(LearnerState state)
    {
        RestoreCounters(state);
        Array.Clear(_w);
        Array.Clear(_g2);
        for (int i = 0; i < state.Slots.Length; i++)
        {
            _w[state.Slots[i]] = state.First[i];
            _g2[state.Slots[i]] = state.Second[i];
        }
    }
}
