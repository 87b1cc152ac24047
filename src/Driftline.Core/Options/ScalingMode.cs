namespace Driftline.Core.Options;

/// <summary>How numeric features are put on a common scale before they meet the weights.</summary>
internal enum ScalingMode
{
    /// <summary>Standardise with a running mean and variance per feature (the default).</summary>
    Online,

    /// <summary>Use raw values, divided by <see cref="ModelOptions.FixedScales"/> where one is given.</summary>
    None,
}
