using System.Runtime.CompilerServices;
using Driftline.Core.Features;
using Driftline.Core.Options;

namespace Driftline.Core.Learning;

/// <summary>
/// Logistic regression trained one label at a time, with per-coordinate adaptive
/// rates and exponential forgetting: binary (one weight vector, P(y = 1) = σ(w·x)) or, with
/// <c>Model:Classes</c>, multinomial (softmax) over K classes with K weight vectors fitted
/// jointly by the gradient of the multinomial log-loss, ∂/∂w_k = (p_k − [y = k]) x (e.g.
/// Bishop 2006, "Pattern Recognition and Machine Learning", §4.3.4). Both are the same code:
/// a model has <see cref="Outputs"/> weight vectors (1 for binary, K for softmax), scores
/// into a span of that many probabilities and learns from the true class index. Forgetting discounts the learner's accumulated
/// statistics by γ = 2^(−1/half-life) per label, so evidence from h labels ago counts half and
/// the rates never shrink to nothing: the model keeps following drift instead of freezing.
/// </summary>
/// <remarks>
/// The discount is applied lazily through one global factor: stored statistics are kept
/// divided by γ^t, so a label touches only its own coordinates (O(active features)). The
/// stored values are renormalised, O(written slots), when the factor nears the range of a double,
/// which happens once every several hundred half-lives.
/// Each hashed slot holds <see cref="Outputs"/> consecutive statistics, one per weight vector,
/// so a softmax model costs one hash lookup per feature like a binary one. Forgetting and the
/// per-coordinate rates act on every output's coordinate alike.
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
        Outputs = options.IsMulticlass ? options.ClassCount : 1;
        _discount = options.HalfLifeLabels > 0 ? Math.Pow(2, -1 / options.HalfLifeLabels) : 1.0;
    }

    /// <summary>
    /// Where the written slots keep their statistics: subclasses index their dense arrays by
    /// the position it gives (and size them to its <see cref="SlotTable.Capacity"/>).
    /// </summary>
    protected SlotTable Written { get; } = new();

    /// <summary>Number of weight slots.</summary>
    public int Size { get; }

    /// <summary>
    /// Weight vectors: 1 for a binary model (its one probability is P(y = 1)), K for a softmax
    /// model over K classes (one probability per class). Subclasses keep this many statistics per
    /// written slot, at dense index position × Outputs + output.
    /// </summary>
    public int Outputs { get; }

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

    /// <summary>P(y = 1 | x), never exactly 0 or 1 (the margin is limited to ±35); binary models only.</summary>
    public double Predict(SparseVector x) => Sigmoid(Margin(x));

    /// <summary>The <see cref="Outputs"/> margins of <paramref name="x"/> (for binary, the log-odds).</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Margins(SparseVector x, Span<double> margins)
    {
        int k = Outputs;
        margins = margins[..k];
        margins.Clear();
        var slots = x.Slots;
        var values = x.Values;
        var written = Written;
        for (int i = 0; i < slots.Length; i++)
        {
            int at = written.Find(slots[i]);
            if (at >= 0)
            {
                int first = at * k;
                for (int j = 0; j < k; j++)
                {
                    margins[j] += WeightAt(first + j) * values[i];
                }
            }
        }
    }

    /// <summary>
    /// Scores <paramref name="x"/> into <paramref name="probabilities"/> (<see cref="Outputs"/>
    /// values): for binary, P(y = 1) exactly as <see cref="Predict"/>; for softmax, the K class
    /// probabilities, summing to 1, each at least about e^−35 / K (every margin is held within
    /// 35 of the largest) so no log-loss is infinite.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Score(SparseVector x, Span<double> probabilities)
    {
        if (Outputs == 1)
        {
            probabilities[0] = Predict(x);
            return;
        }
        Margins(x, probabilities);
        Softmax(probabilities[..Outputs]);
    }

    /// <summary>Turns margins into softmax probabilities in place, each margin held within 35 of the largest.</summary>
    public static void Softmax(Span<double> margins)
    {
        double max = double.NegativeInfinity;
        foreach (double m in margins)
        {
            max = Math.Max(max, m);
        }
        double sum = 0;
        for (int j = 0; j < margins.Length; j++)
        {
            double e = Math.Exp(Math.Max(margins[j] - max, -MarginLimit));
            margins[j] = e;
            sum += e;
        }
        for (int j = 0; j < margins.Length; j++)
        {
            margins[j] /= sum;
        }
    }

    /// <summary>
    /// Learns from one label: one gradient step of the log-loss at the current weights.
    /// Returns false, leaving the model untouched, when a gradient is not finite.
    /// </summary>
    public bool Update(SparseVector x, int y)
    {
        Span<double> p = stackalloc double[Outputs];
        Score(x, p);
        return Update(x, y, p);
    }

    /// <summary>
    /// As <see cref="Update(SparseVector, int)"/>, with <paramref name="p"/> the prediction for
    /// <paramref name="x"/> under the current weights (saves a second pass when the label comes
    /// with the event); binary models only.
    /// </summary>
    public bool Update(SparseVector x, int y, double p) => Update(x, y, new ReadOnlySpan<double>(in p));

    /// <summary>
    /// Learns from one label, <paramref name="y"/> the true class index (0 or 1 for binary), with
    /// <paramref name="probabilities"/> the <see cref="Score"/> of <paramref name="x"/> under the
    /// current weights: one gradient step of the log-loss, (p_k − [y = k]) x for every output k
    /// at once. Returns false, leaving the model untouched, when a gradient is not finite.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public bool Update(SparseVector x, int y, ReadOnlySpan<double> probabilities)
    {
        int k = Outputs;
        // Output j stands for class j of a softmax model, and for class 1 of a binary one.
        Span<double> g = stackalloc double[k];
        for (int j = 0; j < k; j++)
        {
            g[j] = probabilities[j] - ((k == 1 ? 1 : j) == y ? 1 : 0);
        }
        var values = x.Values;
        for (int i = 0; i < values.Length; i++)
        {
            for (int j = 0; j < k; j++)
            {
                double gi = g[j] * values[i];
                if (!double.IsFinite(gi * gi))
                {
                    RefusedUpdates++;
                    return false;
                }
            }
        }
        var slots = x.Slots;
        var written = Written;
        for (int i = 0; i < slots.Length; i++)
        {
            int at = written.FindOrAdd(slots[i], out bool grew);
            if (grew)
            {
                Resize(written.Capacity * k);
            }
            int first = at * k;
            for (int j = 0; j < k; j++)
            {
                Step(first + j, g[j] * values[i]);
            }
        }
        Updates++;
        if (_discount < 1)
        {
            Inflation /= _discount;
            if (Inflation > RenormaliseAbove)
            {
                Renormalise(1 / Inflation, Written.Count * k);
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

    /// <summary>The current weight of <paramref name="slot"/> for <paramref name="output"/> (0 for a slot never written).</summary>
    public double Weight(int slot, int output = 0)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(output);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(output, Outputs);
        int at = Written.Find(slot);
        return at < 0 ? 0 : WeightAt(at * Outputs + output);
    }

    /// <summary>The current weight at dense <paramref name="index"/> (position × Outputs + output).</summary>
    protected abstract double WeightAt(int index);

    /// <summary>Applies gradient <paramref name="g"/> at dense <paramref name="index"/>.</summary>
    protected abstract void Step(int index, double g);

    /// <summary>Grows the dense arrays to <paramref name="capacity"/> entries (positions × Outputs), keeping their contents.</summary>
    protected abstract void Resize(int capacity);

    /// <summary>Multiplies every discounted statistic of the first <paramref name="count"/> entries by <paramref name="factor"/>.</summary>
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
        // Each key is a slot (never negative, and each written once) above its position, so a
        // sort of plain numbers puts the positions in slot order. A comparison that looked both
        // slots up was most of a saved model's capture, which the end of a replay waits for.
        var keys = new long[Written.Count];
        int n = 0;
        int k = Outputs;
        for (int at = 0; at < Written.Count; at++)
        {
            for (int j = at * k; j < at * k + k; j++)
            {
                if (first[j] != 0 || second[j] != 0)
                {
                    keys[n++] = ((long)Written.SlotAt(at) << 32) | (uint)at;
                    break;
                }
            }
        }
        var sorted = keys.AsSpan(0, n);
        sorted.Sort();
        var positions = new int[n];
        for (int i = 0; i < n; i++)
        {
            positions[i] = (int)(uint)sorted[i];
        }
        return positions;
    }

    /// <summary>The slots at <paramref name="positions"/>.</summary>
    protected int[] SlotsAt(int[] positions) => Array.ConvertAll(positions, Written.SlotAt);

    /// <summary>
    /// The entries of <paramref name="statistic"/> at <paramref name="positions"/>, each
    /// position's <see cref="Outputs"/> entries in turn (for binary, one per position).
    /// </summary>
    protected double[] EntriesAt(int[] positions, double[] statistic)
    {
        ArgumentNullException.ThrowIfNull(positions);
        ArgumentNullException.ThrowIfNull(statistic);
        int k = Outputs;
        var entries = new double[positions.Length * k];
        for (int i = 0; i < positions.Length; i++)
        {
            Array.Copy(statistic, positions[i] * k, entries, i * k, k);
        }
        return entries;
    }

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
        int entries = n * Outputs;
        if (state.First.Length != entries || state.Second.Length != entries || (statistics == 3 ? state.Third.Length != entries : state.Third.Length != 0))
        {
            throw new InvalidDataException($"the saved model's statistics do not match its {n} weight slots × {Outputs} output(s) (it was saved by another learner or for another number of classes, or is damaged)");
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
        Resize(Written.Capacity * Outputs);
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
