using System.Runtime.CompilerServices;
using Driftline.Core.Features;
using Driftline.Core.Options;

namespace Driftline.Core.Learning;

/// <summary>
/// Binary logistic regression trained one label at a time, with per-coordinate adaptive
/// rates and exponential forgetting. Forgetting discounts the learner's accumulated
/// statistics by γ = 2^(−1/half-life) per label, so evidence from h labels ago counts half and
/// the rates never shrink to nothing: the model keeps following drift instead of freezing.
/// </summary>
/// <remarks>
/// The discount is applied lazily through one global factor: stored statistics are kept
/// divided by γ^t, so a label touches only its own coordinates (O(active features)). The
/// stored values are renormalised, O(weights), when the factor nears the range of a double,
/// which happens once every several hundred half-lives.
/// </remarks>
internal abstract class OnlineLearner
{
    private const double RenormaliseAbove = 1e150;
    private const double MarginLimit = 35;

    private readonly double _discount;
    private readonly ulong[] _touchedBits;
    private readonly List<int> _touched = [];

    /// <summary>Creates the shared state for <paramref name="options"/>.</summary>
    protected OnlineLearner(ModelOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        Size = 1 << options.HashBits;
        _discount = options.HalfLifeLabels > 0 ? Math.Pow(2, -1 / options.HalfLifeLabels) : 1.0;
        _touchedBits = new ulong[(Size + 63) / 64];
    }

    /// <summary>Number of weight slots.</summary>
    public int Size { get; }

    /// <summary>Labels learned from: the model version.</summary>
    public long Updates { get; protected set; }

    /// <summary>Updates refused because a gradient was not finite (they never reach the weights).</summary>
    public long RefusedUpdates { get; protected set; }

    /// <summary>1 / γ^t: the factor stored statistics are divided by. Starts at 1.</summary>
    protected double Inflation { get; private set; } = 1.0;

    /// <summary>The log-odds of <paramref name="x"/> under the current weights.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public double Margin(SparseVector x)
    {
        var slots = x.Slots;
        var values = x.Values;
        double m = 0;
        for (int i = 0; i < slots.Length; i++)
        {
            m += Weight(slots[i]) * values[i];
        }
        return m;
    }

    /// <summary>P(y = 1 | x), never exactly 0 or 1 (the margin is limited to ±35).</summary>
    public double Predict(SparseVector x) => Sigmoid(Margin(x));

    /// <summary>
    /// Learns from one label: one gradient step of the log-loss at the current weights.
    /// Returns false, leaving the model untouched, when a gradient is not finite.
    /// </summary>
    public bool Update(SparseVector x, int y) => Update(x, y, Predict(x));

    /// <summary>
    /// As <see cref="Update(SparseVector, int)"/>, with <paramref name="p"/> the prediction for
    /// <paramref name="x"/> under the current weights (saves a second pass when the label comes
    /// with the event).
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public bool Update(SparseVector x, int y, double p)
    {
        double g = p - y;
        var values = x.Values;
        for (int i = 0; i < values.Length; i++)
        {
            double gi = g * values[i];
            if (!double.IsFinite(gi * gi))
            {
                RefusedUpdates++;
                return false;
            }
        }
        var slots = x.Slots;
        for (int i = 0; i < slots.Length; i++)
        {
            Touch(slots[i]);
            Step(slots[i], g * values[i]);
        }
        Updates++;
        if (_discount < 1)
        {
            Inflation /= _discount;
            if (Inflation > RenormaliseAbove)
            {
                Renormalise(1 / Inflation);
                Inflation = 1;
            }
        }
        return true;
    }

    /// <summary>The logistic function with the margin limited to ±35.</summary>
    public static double Sigmoid(double margin)
    {
        margin = Math.Clamp(margin, -MarginLimit, MarginLimit);
        return 1 / (1 + Math.Exp(-margin));
    }

    /// <summary>The current weight of <paramref name="slot"/>.</summary>
    public abstract double Weight(int slot);

    /// <summary>Applies gradient <paramref name="g"/> to <paramref name="slot"/>.</summary>
    protected abstract void Step(int slot, double g);

    /// <summary>Multiplies every discounted statistic by <paramref name="factor"/>.</summary>
    protected abstract void Renormalise(double factor);

    /// <summary>The learner's exact state, for a snapshot.</summary>
    public abstract LearnerState Export();

    /// <summary>Loads a state produced by <see cref="Export"/>.</summary>
    public abstract void Import(LearnerState state);

    /// <summary>
    /// The slots where either statistic is non-zero, ascending: the ones a snapshot must keep.
    /// Only slots a step or an import wrote can be non-zero, so the search covers those alone
    /// (a model uses a few hundred of its 2^18 slots; scanning them all held a live worker's
    /// checkpoints for tens of milliseconds).
    /// </summary>
    protected int[] TouchedSlots(double[] first, double[] second)
    {
        ArgumentNullException.ThrowIfNull(first);
        ArgumentNullException.ThrowIfNull(second);
        var slots = new List<int>(_touched.Count);
        foreach (int i in _touched)
        {
            if (first[i] != 0 || second[i] != 0)
            {
                slots.Add(i);
            }
        }
        slots.Sort();
        return [.. slots];
    }

    private void Touch(int slot)
    {
        ref ulong word = ref _touchedBits[slot >> 6];
        ulong bit = 1UL << slot;
        if ((word & bit) == 0)
        {
            word |= bit;
            _touched.Add(slot);
        }
    }

    /// <summary>Restores the counters on import, and the slots the imported state writes.</summary>
    protected void RestoreCounters(LearnerState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        Array.Clear(_touchedBits);
        _touched.Clear();
        foreach (int slot in state.Slots)
        {
            Touch(slot);
        }
        Updates = state.Updates;
        RefusedUpdates = state.RefusedUpdates;
        Inflation = state.Inflation;
    }

    /// <summary>Creates the learner <paramref name="options"/> asks for.</summary>
    public static OnlineLearner Create(ModelOptions options) => options.Learner switch
    {
        LearnerKind.Ftrl => new FtrlProximalLearner(options),
        LearnerKind.AdaGrad => new AdaGradLearner(options),
        _ => throw new ArgumentOutOfRangeException(nameof(options), options.Learner, "unknown learner"),
    };
}
