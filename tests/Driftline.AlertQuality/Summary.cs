namespace Driftline.AlertQuality;

/// <summary>Mean, median and 90th percentile of a list of label counts.</summary>
internal readonly record struct Summary(double Mean, double Median, double P90, int Count)
{
    /// <summary>Summarises <paramref name="values"/>; NaN fields when empty.</summary>
    public static Summary Of(List<long> values)
    {
        if (values.Count == 0)
        {
            return new Summary(double.NaN, double.NaN, double.NaN, 0);
        }

        long[] sorted = [.. values.Order()];
        return new Summary(sorted.Average(), Quantile(sorted, 0.5), Quantile(sorted, 0.9), sorted.Length);
    }

    private static double Quantile(long[] sorted, double q)
    {
        double position = q * (sorted.Length - 1);
        int low = (int)Math.Floor(position);
        int high = Math.Min(low + 1, sorted.Length - 1);
        return sorted[low] + ((position - low) * (sorted[high] - sorted[low]));
    }
}
