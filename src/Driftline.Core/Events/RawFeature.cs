namespace Driftline.Core.Events;

/// <summary>
/// One feature as read from an event, before hashing into weight slots.
/// </summary>
/// <param name="NameHash">Hash of the feature name.</param>
/// <param name="Hash">Hash of <c>name=value</c> for a categorical, of the name for a number.</param>
/// <param name="Value">1 for a categorical; the raw number for a numeric or boolean feature.</param>
/// <param name="Kind">How the value should be scaled.</param>
internal readonly record struct RawFeature(ulong NameHash, ulong Hash, double Value, RawFeatureKind Kind);

/// <summary>The JSON type a feature came from, which decides its scaling.</summary>
internal enum RawFeatureKind : byte
{
    /// <summary>A string, or one string of an array: an indicator with value 1.</summary>
    Categorical,

    /// <summary>A JSON number: scaled as configured.</summary>
    Numeric,

    /// <summary>A JSON boolean: 0 or 1, never rescaled.</summary>
    Boolean,
}
