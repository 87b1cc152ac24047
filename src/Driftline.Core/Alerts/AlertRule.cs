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

    /// <summary>
    /// Evaluates the rule on the window's current measures. Returns the new state when it
    /// changes, null otherwise (also while the window has fewer than MinLabels labels).
    /// </summary>
    public bool? Evaluate(CalibrationWindow model, CalibrationWindow prior, out double value)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(prior);
        value = double.NaN;
        if (model.Count < Options.MinLabels)
        {
            return null;
        }
        value = Measure(Options.Metric, model, prior);
        if (double.IsNaN(value))
        {
            return null;
        }
        bool above = Options.Direction == AlertDirection.Above;
        if (!Raised && (above ? value >= Options.Raise : value <= Options.Raise))
        {
            Raised = true;
            RaisedCount++;
            return true;
        }
        if (Raised && (above ? value <= Options.Clear : value >= Options.Clear))
        {
            Raised = false;
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
            _ => double.NaN,
        };
    }
}
