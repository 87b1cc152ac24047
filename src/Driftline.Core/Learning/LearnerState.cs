namespace Driftline.Core.Learning;

/// <summary>
/// A learner's state in a plain form for snapshots: the slots that were ever touched, with
/// the learner's statistics per slot (FTRL: z, n and S; AdaGrad: w and Σg²).
/// </summary>
internal sealed class LearnerState
{
    /// <summary>Slots with state.</summary>
    public int[] Slots { get; set; } = [];

    /// <summary>First statistic per slot.</summary>
    public double[] First { get; set; } = [];

    /// <summary>Second statistic per slot.</summary>
    public double[] Second { get; set; } = [];

    /// <summary>Third statistic per slot (empty when the learner keeps two).</summary>
    public double[] Third { get; set; } = [];

    /// <summary>The forgetting factor the statistics are stored under (1 without forgetting); kept so a restored model continues bit for bit.</summary>
    public double Inflation { get; set; } = 1;

    /// <summary>Labels learned from.</summary>
    public long Updates { get; set; }

    /// <summary>Updates refused for a non-finite gradient.</summary>
    public long RefusedUpdates { get; set; }
}
