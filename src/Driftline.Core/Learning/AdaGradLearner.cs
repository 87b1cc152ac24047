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
        _w = new double[Written.Capacity];
        _g2 = new double[Written.Capacity];
    }

    /// <inheritdoc />
    protected override double WeightAt(int position) => _w[position];

    /// <inheritdoc />
    protected override void Step(int position, double g)
    {
        g += _l2 * _w[position];
        double inflation = Inflation;
        _g2[position] += g * g * inflation;
        _w[position] -= _alpha * g / (_beta + Math.Sqrt(_g2[position] / inflation));
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
            First = Array.ConvertAll(positions, i => _w[i]),
            Second = Array.ConvertAll(positions, i => _g2[i]),
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
