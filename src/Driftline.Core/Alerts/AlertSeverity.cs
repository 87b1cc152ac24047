namespace Driftline.Core.Alerts;

/// <summary>How urgent an alert is, for routing (a page versus a ticket).</summary>
internal enum AlertSeverity
{
    /// <summary>Look at it soon.</summary>
    Warning,

    /// <summary>Act now: decisions taken on these probabilities are likely wrong.</summary>
    Critical,
}
