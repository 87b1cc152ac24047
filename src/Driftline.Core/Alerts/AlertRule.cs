using Driftline.Core.Metrics;

namespace Driftline.Core.Alerts;

/// <summary>
/// The running state of one rule: evaluated after every label against its window, it
/// raises once when the measure crosses the raise threshold and clears once when it comes
/// back past the clear threshold (hysteresis).
/// </summary>
internal sealed class AlertRule
{
    /// <summary>Creates the state of <paramref name="options"/>, not raised.</summary>
    public AlertRule(AlertRuleOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        Options = options;
    }

    /// <summary>The rule's settings.</summary>
    public AlertRuleOptions Options { get; }

    /// <summary>True while raised.</summary>
    public bool Raised { get; set; }

    /// <summary>Times raised in the run.</summary>
    public long RaisedCount { get; set; }

    /// <summary>The reference value when thresholds are relative to a reference period; NaN until captured.</summary>
    public double Reference { get; set; } = double.NaN;

    /// <summary>Labels seen by the rule (counts every evaluation, for the cool-down).</summary>
    public long Seen { get; set; }

    /// <summary>Value of <see cref="Seen"/> when the rule last cleared; the cool-down runs from there.</summary>
    public long ClearedAt { get; set; } = long.MinValue / 2;

    /// <summary>
    /// Evaluates the rule on the window's current measures. Returns the new state when it
    /// changes, null otherwise (also while the window has fewer than MinLabels labels).
    /// </summary>
    public bool? Evaluate(CalibrationWindow model, CalibrationWindow prior, out double value)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(prior);
        value = double.NaN;
        Seen++;
        if (model.Count < Options.MinLabels)
        {
            return null;
        }
        value = Measure(Options.Metric, model, prior);
        switch (Options.RelativeTo)
        {
            case AlertBaseline.Prior:
                double baseline = Options.Metric == AlertMetric.Brier ? prior.Current.Brier : prior.LogLoss;
                value = baseline > 0 ? value / baseline : double.NaN;
                break;
            case AlertBaseline.Reference:
                if (double.IsNaN(Reference))
                {
                    int needed = Options.ReferenceLabels > 0 ? Options.ReferenceLabels : Options.Window;
                    if (model.Count >= Math.Min(needed, model.Capacity) && value > 0)
                    {
                        Reference = value;
                    }
                    return null;
                }
                value /= Reference;
                break;
        }
        if (double.IsNaN(value))
        {
            return null;
        }
        bool above = Options.Direction == AlertDirection.Above;
        if (!Raised && (above ? value >= Options.Raise : value <= Options.Raise) && Seen - ClearedAt > Options.CooldownLabels)
        {
            Raised = true;
            RaisedCount++;
            return true;
        }
        if (Raised && (above ? value <= Options.Clear : value >= Options.Clear))
        {
            Raised = false;
            ClearedAt = Seen;
            return false;
        }
        return null;
    }

    /// <summary>
    /// The value of <paramref name="metric"/> on a window (NaN when it is undefined). Runs after
    /// every label, so the O(1) measures are read directly rather than through a full snapshot.
    /// </summary>
    public static double Measure(AlertMetric metric, CalibrationWindow model, CalibrationWindow prior)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(prior);
        return metric switch
        {
            AlertMetric.LogLoss => model.LogLoss,
            AlertMetric.Brier => model.Current.Brier,
            AlertMetric.Ece => model.Current.Ece,
            AlertMetric.CalibrationInTheLarge => model.CalibrationInTheLarge,
            AlertMetric.CalibrationGap => Math.Abs(model.CalibrationInTheLarge),
            AlertMetric.LogLossOverPrior => prior.LogLoss > 0 ? model.LogLoss / prior.LogLoss : double.NaN,
            AlertMetric.CalibrationZ => Math.Abs(model.CalibrationZ),
            _ => double.NaN,
        };
    }
}
