namespace Driftline.Core.Metrics;

/// <summary>
/// The class-prior model kept beside every real model, so a metric can be reported as skill over
/// "always predict the base rate".
/// </summary>
/// <remarks>
/// Predicts P(y = 1) = (n1 + 1) / (N + 2), Laplace's rule of succession (common practice): it is
/// 0.5 before any outcome and never exactly 0 or 1, so its log-loss stays finite after a run of
/// one class. Call <see cref="Predict"/> before <see cref="Add"/> for each outcome (progressive
/// validation), so the baseline, like the model, is graded only on outcomes it has not seen.
/// Not thread-safe.
/// </remarks>
internal sealed class PriorBaseline
{
    /// <summary>Outcomes counted.</summary>
    public long Count { get; private set; }

    /// <summary>Outcomes equal to 1.</summary>
    public long Positives { get; private set; }

    /// <summary>Probability of the positive class, (Positives + 1) / (Count + 2); 0.5 when empty.</summary>
    public double Predict() => (Positives + 1.0) / (Count + 2.0);

    /// <summary>Counts one outcome.</summary>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="y"/> is not 0 or 1; nothing is counted.</exception>
    public void Add(int y)
    {
        if (y is not (0 or 1))
        {
            throw new ArgumentOutOfRangeException(nameof(y), y, "An outcome must be 0 or 1.");
        }

        Count = checked(Count + 1);
        Positives += y;
    }

    /// <summary>An independent copy.</summary>
    public PriorBaseline Copy() => new() { Count = Count, Positives = Positives };

    /// <summary>Rebuilds a baseline from saved counts.</summary>
    /// <exception cref="ArgumentOutOfRangeException">
    /// <paramref name="count"/> is negative, or <paramref name="positives"/> is outside [0, <paramref name="count"/>].
    /// </exception>
    public static PriorBaseline Restore(long count, long positives)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(count);
        ArgumentOutOfRangeException.ThrowIfNegative(positives);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(positives, count);
        return new PriorBaseline { Count = count, Positives = positives };
    }
}
