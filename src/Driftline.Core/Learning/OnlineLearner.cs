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
/// stored values are renormalised, O(written slots), when the factor nears the range of a double,
/// which happens once every several hundred half-lives.
/// </remarks>
internal abstract class OnlineLearner
{
    private const double RenormaliseAbove = 1e150;
    private const double MarginLimit = 35;

    private readonly double _discount;

    /// <summary>Creates the shared state for <paramref name="options"/>.</summary>
    protected OnlineLearner(ModelOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        Size = 1 << options.HashBits;
        _discount = options.HalfLifeLabels > 0 ? Math.Pow(2, -1 / options.HalfLifeLabels) : 1.0;
    }

    /// <summary>
    /// Where the written slots keep their statistics: subclasses index their dense arrays by
    /// the position it gives (and size them to its <see cref="SlotTable.Capacity"/>).
    /// </summary>
    protected SlotTable Written { get; } = new();

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
        var written = Written;
        for (int i = 0; i < slots.Length; i++)
        {
            int at = written.Find(slots[i]);
            if (at >= 0)
            {
                m += WeightAt(at) * values[i];
            }
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
        var written = Written;
        for (int i = 0; i < slots.Length; i++)
        {
            int at = written.FindOrAdd(slots[i], out bool grew);
            if (grew)
            {
                Resize(written.Capacity);
            }
            Step(at, g * values[i]);
        }
        Updates++;
        if (_discount < 1)
        {
            Inflation /= _discount;
            if (Inflation > RenormaliseAbove)
            {
                Renormalise(1 / Inflation, Written.Count);
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

    /// <summary>The current weight of <paramref name="slot"/> (0 for a slot never written).</summary>
    public double Weight(int slot)
    {
        int at = Written.Find(slot);
        return at < 0 ? 0 : WeightAt(at);
    }

    /// <summary>The current weight of the slot at dense <paramref name="position"/>.</summary>
    protected abstract double WeightAt(int position);

    /// <summary>Applies gradient <paramref name="g"/> to the slot at dense <paramref name="position"/>.</summary>
    protected abstract void Step(int position, double g);

    /// <summary>Grows the dense arrays to <paramref name="capacity"/> positions, keeping their contents.</summary>
    protected abstract void Resize(int capacity);

    /// <summary>Multiplies every discounted statistic of the first <paramref name="count"/> positions by <paramref name="factor"/>.</summary>
    protected abstract void Renormalise(double factor, int count);

    /// <summary>The learner's exact state, for a snapshot.</summary>
    public abstract LearnerState Export();

    /// <summary>Loads a state produced by <see cref="Export"/>.</summary>
    public abstract void Import(LearnerState state);

    /// <summary>
    /// The positions where either statistic is non-zero, in ascending slot order: the ones a
    /// snapshot must keep (a slot can be written and still hold zeros, e.g. a zero gradient).
    /// </summary>
    protected int[] SnapshotPositions(double[] first, double[] second)
    {
        ArgumentNullException.ThrowIfNull(first);
        ArgumentNullException.ThrowIfNull(second);
        var positions = new List<int>(Written.Count);
        for (int at = 0; at < Written.Count; at++)
        {
            if (first[at] != 0 || second[at] != 0)
            {
                positions.Add(at);
            }
        }
        positions.Sort((x, y) => Written.SlotAt(x).CompareTo(Written.SlotAt(y)));
        return [.. positions];
    }

    /// <summary>The slots at <paramref name="positions"/>.</summary>
    protected int[] SlotsAt(int[] positions) => Array.ConvertAll(positions, Written.SlotAt);

    /// <summary>
    /// Restores the counters on import and writes the imported slots into the table in
    /// their order, so the i-th imported slot gets position i; statistics other than
    /// <paramref name="statistics"/> per slot, a slot outside the model or
    /// listed twice means the state belongs to another configuration or is damaged.
    /// </summary>
    protected void RestoreCounters(LearnerState state, int statistics)
    {
        ArgumentNullException.ThrowIfNull(state);
        int n = state.Slots.Length;
        if (state.First.Length != n || state.Second.Length != n || (statistics == 3 ? state.Third.Length != n : state.Third.Length != 0))
        {
            throw new InvalidDataException($"the saved model's statistics do not match its {n} weight slots (it was saved by another learner, or is damaged)");
        }
        Written.Clear();
        foreach (int slot in state.Slots)
        {
            if ((uint)slot >= (uint)Size)
            {
                throw new InvalidDataException($"the saved model has weight slot {slot}, outside this model's {Size} slots (Model:HashBits differs from the run that saved it)");
            }
            int before = Written.Count;
            Written.FindOrAdd(slot, out _);
            if (Written.Count == before)
            {
                throw new InvalidDataException($"the saved model lists weight slot {slot} twice");
            }
        }
        Resize(Written.Capacity);
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
