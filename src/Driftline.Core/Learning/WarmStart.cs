using Driftline.Core.Options;

namespace Driftline.Core.Learning;

/// <summary>
/// Turns batch-fitted weights into a learner state the online model continues from. Each
/// weight gets the confidence the online learner would have after seeing the same data:
/// its sum of squared gradients at the fit, capped by forgetting at the mass a half-life
/// keeps (h / ln 2 labels' worth), so a warm-started model still follows drift.
/// </summary>
internal static class WarmStart
{
    /// <summary>
    /// The learner state for <paramref name="weights"/> (slot → weight) with
    /// <paramref name="squaredGradients"/> (slot → Σ(p − y)²x² over the <paramref name="rows"/> rows).
    /// </summary>
    public static LearnerState FromWeights(ModelOptions options, IReadOnlyDictionary<int, double> weights,
        IReadOnlyDictionary<int, double> squaredGradients, long rows)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(weights);
        ArgumentNullException.ThrowIfNull(squaredGradients);
        double keep = options.HalfLifeLabels > 0 && rows > 0 ? Math.Min(1, options.HalfLifeLabels / Math.Log(2) / rows) : 1;
        var slots = weights.Keys.Order().ToArray();
        var state = new LearnerState { Slots = slots, Updates = rows };
        state.First = new double[slots.Length];
        state.Second = new double[slots.Length];
        state.Third = options.Learner == LearnerKind.Ftrl ? new double[slots.Length] : [];
        for (int i = 0; i < slots.Length; i++)
        {
            double w = weights[slots[i]];
            double n = squaredGradients.GetValueOrDefault(slots[i]) * keep;
            state.Second[i] = n;
            if (options.Learner == LearnerKind.AdaGrad)
            {
                state.First[i] = w;
                continue;
            }
            // Invert FTRL's closed form w = −(z − sgn(z)·λ1) / (β/α + S + λ2) with S = √n / α.
            double sigma = Math.Sqrt(n) / options.LearningRate;
            state.Third[i] = sigma;
            double denominator = options.RateSmoothing / options.LearningRate + sigma + options.L2;
            state.First[i] = w == 0 ? 0 : -w * denominator - Math.Sign(w) * options.L1;
        }
        return state;
    }

    /// <summary>
    /// The learner state of a softmax model for <paramref name="weights"/> (slot → one weight per
    /// class) with <paramref name="squaredGradients"/> (slot → per class Σ(p_k − [y = k])²x²),
    /// each class's coordinate given confidence as <see cref="FromWeights"/> gives a binary one's.
    /// </summary>
    public static LearnerState FromClassWeights(ModelOptions options, IReadOnlyDictionary<int, double[]> weights,
        IReadOnlyDictionary<int, double[]> squaredGradients, long rows)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(weights);
        ArgumentNullException.ThrowIfNull(squaredGradients);
        int k = options.ClassCount;
        double keep = options.HalfLifeLabels > 0 && rows > 0 ? Math.Min(1, options.HalfLifeLabels / Math.Log(2) / rows) : 1;
        var slots = weights.Keys.Order().ToArray();
        var state = new LearnerState { Slots = slots, Updates = rows };
        state.First = new double[slots.Length * k];
        state.Second = new double[slots.Length * k];
        state.Third = options.Learner == LearnerKind.Ftrl ? new double[slots.Length * k] : [];
        for (int i = 0; i < slots.Length; i++)
        {
            double[] w = weights[slots[i]];
            double[]? g2 = squaredGradients.GetValueOrDefault(slots[i]);
            for (int c = 0; c < k; c++)
            {
                int at = (i * k) + c;
                double n = (g2?[c] ?? 0) * keep;
                state.Second[at] = n;
                if (options.Learner == LearnerKind.AdaGrad)
                {
                    state.First[at] = w[c];
                    continue;
                }
                double sigma = Math.Sqrt(n) / options.LearningRate;
                state.Third[at] = sigma;
                double denominator = options.RateSmoothing / options.LearningRate + sigma + options.L2;
                state.First[at] = w[c] == 0 ? 0 : -w[c] * denominator - Math.Sign(w[c]) * options.L1;
            }
        }
        return state;
    }
}
