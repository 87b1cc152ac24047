namespace Driftline.Core.Alerts;

/// <summary>What a rule's thresholds are measured against.</summary>
internal enum AlertBaseline
{
    /// <summary>The measure itself (absolute thresholds).</summary>
    None,

    /// <summary>The measure divided by the class-prior baseline's over the same window (log-loss and Brier only).</summary>
    Prior,

    /// <summary>
    /// The measure divided by its value over a reference period: the first time the window
    /// holds <see cref="AlertRuleOptions.ReferenceLabels"/> labels (log-loss, Brier and ECE only).
    /// </summary>
    Reference,
}
