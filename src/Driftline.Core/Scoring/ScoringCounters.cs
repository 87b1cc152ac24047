namespace Driftline.Core.Scoring;

/// <summary>Whole-run counts kept by the core.</summary>
internal sealed class ScoringCounters
{
    /// <summary>Events scored.</summary>
    public long Events { get; set; }

    /// <summary>Labels graded (inline and late).</summary>
    public long Labels { get; set; }

    /// <summary>Labels that came with their event.</summary>
    public long InlineLabels { get; set; }

    /// <summary>Label-only records that joined a pending prediction.</summary>
    public long LateLabels { get; set; }

    /// <summary>Label-only records with no pending prediction.</summary>
    public long UnknownLabels { get; set; }

    /// <summary>Second labels for a graded prediction.</summary>
    public long DuplicateLabels { get; set; }

    /// <summary>External probabilities recorded (monitor mode).</summary>
    public long Probabilities { get; set; }

    /// <summary>Records the core refused (e.g. a new key beyond <c>Model:MaxModels</c>).</summary>
    public long Rejected { get; set; }

    /// <summary>Records dated more than <c>Labels:MaxClockSkew</c> ahead of the clock, taken at the clock plus the skew.</summary>
    public long ClampedTimes { get; set; }

    /// <summary>Alerts raised.</summary>
    public long AlertsRaised { get; set; }

    /// <summary>Alerts cleared.</summary>
    public long AlertsCleared { get; set; }

    /// <summary>
    /// Incidents: stretches during which at least one rule was raised. A raise while another
    /// rule is already raised joins that incident, so one break reads as one incident however
    /// many rules see it.
    /// </summary>
    public long Incidents { get; set; }

    /// <summary>A copy for snapshots.</summary>
    public ScoringCounters Copy() => (ScoringCounters)MemberwiseClone();
}
