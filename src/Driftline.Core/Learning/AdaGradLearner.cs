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
    private double[] _w;
    private double[] _g2;

    /// <summary>Creates an untrained learner.</summary>
    public AdaGradLearner(ModelOptions options) : base(options)
    {
        _alpha = options.LearningRate;
        _beta = options.RateSmoothing;
        _l2 = options.L2;
        _w = new double[Written.Capacity * Outputs];
        _g2 = new double[Written.Capacity * Outputs];
    }

    /// <inheritdoc />
    protected override double WeightAt(int index) => _w[index];

    /// <inheritdoc />
    protected override void Step(int index, double g)
    {
        g += _l2 * _w[index];
        double inflation = Inflation;
        _g2[index] += g * g * inflation;
        _w[index] -= _alpha * g / (_beta + Math.Sqrt(_g2[index] / inflation));
    }

    /// <inheritdoc />
    protected override void Resize(int capacity)
    {
        Array.Resize(ref _w, capacity);
        Array.Resize(ref _g2, capacity);
    }

    /// <inheritdoc />
    protected override void Renormalise(double factor, int count)
    {
        for (int i = 0; i < count; i++)
        {
            _g2[i] *= factor;
        }
    }

    /// <inheritdoc />
    public override LearnerState Export()
    {
        var positions = SnapshotPositions(_w, _g2);
        return new LearnerState
        {
            Slots = SlotsAt(positions),
            First = EntriesAt(positions, _w),
            Second = EntriesAt(positions, _g2),
            Inflation = Inflation,
            Updates = Updates,
            RefusedUpdates = RefusedUpdates,
        };
    }

    /// <inheritdoc />
    public override void Import(LearnerState state)
    {
        RestoreCounters(state, statistics: 2);
        Array.Clear(_w);
        Array.Clear(_g2);
        // RestoreCounters gave the i-th saved slot position i.
        state.First.CopyTo(_w, 0);
        state.Second.CopyTo(_g2, 0);
    }
}
