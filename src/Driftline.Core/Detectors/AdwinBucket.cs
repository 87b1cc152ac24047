namespace Driftline.Core.Detectors;

/// <summary>
/// One bucket of <see cref="AdwinDetector"/>'s exponential histogram: a run of consecutive
/// values summarised by their count, mean and sum of squared deviations from the mean.
/// </summary>
/// <param name="Count">Values in the bucket, a power of two.</param>
/// <param name="Mean">Their mean.</param>
/// <param name="SquaredDeviations">Σ (x − mean)² over them.</param>
internal readonly record struct AdwinBucket(long Count, double Mean, double SquaredDeviations)
{
    /// <summary>
    /// The bucket holding both runs, by the pairwise update of Chan, Golub &amp; LeVeque (1979),
    /// "Updating formulae and a pairwise algorithm for computing sample variances", Stanford
    /// CS report STAN-CS-79-773: no sums of squares are formed, so no digits cancel.
    /// </summary>
    public static AdwinBucket Merge(AdwinBucket a, AdwinBucket b)
    {
        long n = a.Count + b.Count;
        double difference = b.Mean - a.Mean;
        double mean = a.Mean + (difference * b.Count / n);
        double squared = a.SquaredDeviations + b.SquaredDeviations + (difference * difference * a.Count * b.Count / n);
        return new AdwinBucket(n, mean, squared);
    }
}
