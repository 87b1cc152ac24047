namespace Driftline.Core.Metrics;

/// <summary>
/// The class-prior model kept beside every real model, so a metric can be reported as skill over
/// "always predict the base rate".
/// </summary>
/// <remarks>
/// Predicts P(y = k) = (n_k + 1) / (N + K), Laplace's rule of succession (common practice): for
/// a binary model (K = 2) P(y = 1) = (n1 + 1) / (N + 2), 0.5 before any outcome; it is never
/// exactly 0 or 1, so its log-loss stays finite after a run of one class. Call
/// <see cref="Predict()"/> before <see cref="Add"/> for each outcome (progressive validation),
/// so the baseline, like the model, is graded only on outcomes it has not seen. Not thread-safe.
/// </remarks>
internal sealed class PriorBaseline
{
    private readonly long[] _counts;

    /// <summary>A baseline over <paramref name="classes"/> outcomes (2, the default, for a binary model).</summary>
    public PriorBaseline(int classes = 2)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(classes, 2);
        _counts = new long[classes];
    }

    /// <summary>Number of classes K.</summary>
    public int Classes => _counts.Length;

    /// <summary>Outcomes counted.</summary>
    public long Count { get; private set; }

    /// <summary>Outcomes equal to 1.</summary>
    public long Positives => _counts[1];

    /// <summary>Outcomes of each class.</summary>
    public ReadOnlySpan<long> ClassCounts => _counts;

    /// <summary>Probability of the positive class, (Positives + 1) / (Count + 2); 0.5 when empty.</summary>
    public double Predict() => (Positives + 1.0) / (Count + 2.0);

    /// <summary>
    /// The prior as a model's outputs: for a binary baseline the one value <see cref="Predict()"/>;
    /// for K classes the K values (n_k + 1) / (N + K).
    /// </summary>
    public void Predict(Span<double> probabilities)
    {
        if (_counts.Length == 2)
        {
            probabilities[0] = Predict();
            return;
        }
        double total = Count + (double)_counts.Length;
        for (int k = 0; k < _counts.Length; k++)
        {
            probabilities[k] = (_counts[k] + 1.0) / total;
        }
    }

    /// <summary>Counts one outcome, the class index.</summary>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="y"/> is not a class index (0 or 1 for binary); nothing is counted.</exception>
    public void Add(int y)
    {
        if ((uint)y >= (uint)_counts.Length)
        {
            throw new ArgumentOutOfRangeException(nameof(y), y, _counts.Length == 2 ? "An outcome must be 0 or 1." : $"An outcome must be a class index from 0 to {_counts.Length - 1}.");
        }

        Count = checked(Count + 1);
        _counts[y]++;
    }

    /// <summary>An independent copy.</summary>
    public PriorBaseline Copy()
    {
        var copy = new PriorBaseline(_counts.Length) { Count = Count };
        _counts.CopyTo(copy._counts, 0);
        return copy;
    }

    /// <summary>Rebuilds a binary baseline from saved counts.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="count"/> is negative, or <paramref name="positives"/> is outside [0, <paramref name="count"/>].
    /// </exception>
    public static PriorBaseline Restore(long count, long positives)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(count);
        ArgumentOutOfRangeException.ThrowIfNegative(positives);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(positives, count);
        var prior = new PriorBaseline { Count = count };
        prior._counts[0] = count - positives;
        prior._counts[1] = positives;
        return prior;
    }

    /// <summary>Rebuilds a baseline from saved counts per class.</summary>
    /// <exception cref="ArgumentOutOfRangeException">Fewer than two classes, or a negative count.</exception>
    public static PriorBaseline Restore(ReadOnlySpan<long> classCounts)
    {
        var prior = new PriorBaseline(classCounts.Length);
        foreach (long n in classCounts)
        {
            ArgumentOutOfRangeException.ThrowIfNegative(n, nameof(classCounts));
            prior.Count = checked(prior.Count + n);
        }
        classCounts.CopyTo(prior._counts);
        return prior;
    }
}
