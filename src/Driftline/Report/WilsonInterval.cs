namespace Driftline.Report;

/// <summary>
/// The Wilson score interval for a binomial proportion (Wilson 1927, "Probable inference, the
/// law of succession, and statistical inference", JASA 22). Chosen over the normal
/// approximation because reliability bins at the extremes hold few labels with rates near 0
/// or 1, where the normal interval collapses to a point or leaves [0, 1]; Wilson's stays inside
/// and keeps a sensible width.
/// </summary>
internal static class WilsonInterval
{
    /// <summary>z for a two-sided 95% interval.</summary>
    public const double Z95 = 1.959963984540054;

    /// <summary>
    /// The interval for <paramref name="successes"/> out of <paramref name="trials"/>. Returns
    /// (NaN, NaN) for no trials; bounds are clamped to [0, 1] against rounding.
    /// </summary>
    public static (double Lower, double Upper) Of(double successes, long trials, double z = Z95)
    {
        if (trials <= 0)
        {
            return (double.NaN, double.NaN);
        }
        double n = trials;
        double p = successes / n;
        double z2 = z * z;
        double centre = (p + z2 / (2 * n)) / (1 + z2 / n);
        double half = z / (1 + z2 / n) * Math.Sqrt(p * (1 - p) / n + z2 / (4 * n * n));
        return (Math.Max(0, centre - half), Math.Min(1, centre + half));
    }
}
