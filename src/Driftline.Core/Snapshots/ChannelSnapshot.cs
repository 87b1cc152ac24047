using System.Text.Json.Serialization;
using Driftline.Core.Metrics;

namespace Driftline.Core.Snapshots;

/// <summary>One grading channel's state: a class of a multiclass model against the rest.</summary>
internal sealed class ChannelSnapshot
{
    /// <summary>The class the channel watches (null for the whole model).</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? Class { get; set; }

    /// <summary>Count windows.</summary>
    public List<WindowSnapshot> Windows { get; set; } = [];

    /// <summary>Time windows.</summary>
    public List<TimeWindowSnapshot> TimeWindows { get; set; } = [];

    /// <summary>The model over the whole run.</summary>
    public CalibrationTotalsState? Totals { get; set; }

    /// <summary>The prior over the whole run.</summary>
    public CalibrationTotalsState? PriorTotals { get; set; }

    /// <summary>The channel's rules.</summary>
    public List<RuleSnapshot> Rules { get; set; } = [];
}
