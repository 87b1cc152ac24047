using System.Runtime.CompilerServices;
using Driftline.Core.Detectors;
using Driftline.Core.Metrics;
using Driftline.Core.Snapshots;

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
        switch (options.Metric)
        {
            case AlertMetric.CalibrationDrift:
                Cusum = new CalibrationCusumDetector(options.LabelsPerFalseAlarm);
                break;
            case AlertMetric.LossShift:
                _lossDetector = new PageHinkleyDetector();
                break;
            case AlertMetric.LossChange:
                _lossDetector = new AdwinDetector();
                break;
            case AlertMetric.Auc:
                _auc = new RollingAuc(options.Window);
                break;
        }
    }

    private readonly ChangeDetector? _lossDetector;
    private readonly RollingAuc? _auc;
    private long _lastSignal = long.MinValue / 2;
    private double _lastHosmerLemeshow = double.NaN;

    /// <summary>The sequential calibration test of a CalibrationDrift rule, else null.</summary>
    public CalibrationCusumDetector? Cusum { get; private set; }

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

    /// <summary>Labels in a row, while raised, with the measure on the good side of Clear (the clear hold).</summary>
    public long ClearStreak { get; set; }

    /// <summary>Value of <see cref="Seen"/> when the rule last cleared; the cool-down runs from there.</summary>
    public long ClearedAt { get; set; } = long.MinValue / 2;

    /// <summary>
    /// Evaluates the rule on the window's current measures. Returns the new state when it
    /// changes, null otherwise (also while the window has fewer than MinLabels labels).
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public bool? Evaluate(IGradedWindow model, IGradedWindow prior, double p, int y, out double value)
    {
        bool? change = EvaluateCore(model, prior, p, y, out value);
        LastValue = value;
        return change;
    }

    /// <summary>
    /// The value the rule compared with its thresholds at the last label (for CalibrationDrift,
    /// the test's evidence); NaN before MinLabels or when undefined. Drawn by the report.
    /// </summary>
    public double LastValue { get; private set; } = double.NaN;

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private bool? EvaluateCore(IGradedWindow model, IGradedWindow prior, double p, int y, out double value)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(prior);
        value = double.NaN;
        Seen++;
        _auc?.Add(p, y);
        if (Options.IsDetector)
        {
            // Detectors are sequential: MinLabels is their warm-up in labels, not a window fill.
            return Seen <= Options.MinLabels ? null : Detect(p, y, out value);
        }
        if (model.Count < Options.MinLabels)
        {
            return null;
        }
        value = Options.Metric switch
        {
            AlertMetric.Auc => _auc!.Value,
            AlertMetric.HosmerLemeshowP => HosmerLemeshowP(model),
            _ => Measure(Options.Metric, model, prior),
        };
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
        if (Raised)
        {
            // The clear must hold (ClearHoldLabels): a measure dipping past Clear for a moment
            // in a sustained break leaves the incident open.
            ClearStreak = (above ? value <= Options.Clear : value >= Options.Clear) ? ClearStreak + 1 : 0;
            if (ClearStreak > Options.EffectiveClearHold)
            {
                Raised = false;
                ClearStreak = 0;
                ClearedAt = Seen;
                return false;
            }
        }
        return null;
    }

    /// <summary>
    /// Writes the state of the rule's loss detector, its AUC window and the values it holds
    /// between labels into <paramref name="saved"/>, so a restored rule continues exactly.
    /// </summary>
    public void ExportMonitors(RuleSnapshot saved)
    {
        ArgumentNullException.ThrowIfNull(saved);
        saved.LossDetector = _lossDetector?.Export();
        saved.AucWindow = _auc?.Contents();
        saved.LastSignal = _lastSignal;
        saved.HeldHosmerLemeshow = _lastHosmerLemeshow;
        saved.ClearStreak = ClearStreak;
    }

    /// <summary>Continues from what <see cref="ExportMonitors"/> wrote; parts the snapshot lacks start empty.</summary>
    /// <exception cref="ArgumentException">The saved detector state does not fit this rule's detector.</exception>
    public void ImportMonitors(RuleSnapshot saved)
    {
        ArgumentNullException.ThrowIfNull(saved);
        if (_lossDetector is not null && saved.LossDetector is { } detector)
        {
            _lossDetector.Import(detector);
        }
        if (_auc is not null && saved.AucWindow is { } window)
        {
            _auc.Clear();
            foreach (var g in window.AsSpan(Math.Max(0, window.Length - _auc.Capacity)))
            {
                _auc.Add(g.P, g.Y);
            }
        }
        _lastSignal = saved.LastSignal;
        _lastHosmerLemeshow = saved.HeldHosmerLemeshow;
        ClearStreak = saved.ClearStreak;
    }

    // The detectors start after MinLabels labels (the warm-up), so a model still learning its
    // first weights does not count as a break.
    private bool? Detect(double p, int y, out double value)
    {
        if (Cusum is { } cusum)
        {
            bool was = cusum.IsRaised;
            cusum.Add(p, y);
            value = cusum.Statistic;
            if (cusum.IsRaised == was)
            {
                return null;
            }
            if (cusum.IsRaised)
            {
                Raised = true;
                RaisedCount++;
                return true;
            }
            Raised = false;
            ClearedAt = Seen;
            return false;
        }
        var detector = _lossDetector!;
        var state = detector.Add(PredictionScores.LogLoss(p, y));
        value = state == DetectorState.Drift ? 1 : 0;
        if (state == DetectorState.Drift)
        {
            _lastSignal = Seen;
            if (!Raised && Seen - ClearedAt > Options.CooldownLabels)
            {
                Raised = true;
                RaisedCount++;
                return true;
            }
            return null;
        }
        if (Raised && Seen - _lastSignal >= Options.Window)
        {
            Raised = false;
            ClearedAt = Seen;
            return false;
        }
        return null;
    }

    // Sorting a window per label would dominate the step, so the p-value is refreshed every
    // Window/20 labels and held in between.
    private double HosmerLemeshowP(IGradedWindow window)
    {
        int every = Math.Max(1, Options.Window / 20);
        if (double.IsNaN(_lastHosmerLemeshow) || Seen % every == 0)
        {
            var result = HosmerLemeshow.Compute(window.Contents());
            _lastHosmerLemeshow = result.IsReady ? result.PValue : double.NaN;
        }
        return _lastHosmerLemeshow;
    }

    /// <summary>
    /// The value of <paramref name="metric"/> on a window (NaN when it is undefined). Runs after
    /// every label, so the O(1) measures are read directly rather than through a full snapshot.
    /// </summary>
    public static double Measure(AlertMetric metric, IGradedWindow model, IGradedWindow prior)
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
