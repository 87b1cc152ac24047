namespace Driftline.Core.Alerts;

/// <summary>Which side of the threshold is bad.</summary>
internal enum AlertDirection
{
    /// <summary>Raise when the measure rises to the raise threshold; clear when it falls to the clear threshold.</summary>
    Above,

    /// <summary>Raise when the measure falls to the raise threshold; clear when it rises to the clear threshold.</summary>
    Below,
}
