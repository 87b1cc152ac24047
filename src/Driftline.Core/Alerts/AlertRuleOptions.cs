using Driftline.Core.Options;

namespace Driftline.Core.Alerts;

/// <summary>
/// One alert rule over a count window of labels, with hysteresis: it raises when the measure
/// crosses <see cref="Raise"/> and clears only when it comes back past <see cref="Clear"/>,
/// so a value hovering at the threshold does not flap.
/// </summary>
internal sealed class AlertRuleOptions
{
    /// <summary>Name shown in alerts. Required.</summary>
    public string Name { get; set; } = "";

    /// <summary>The measure watched.</summary>
    public AlertMetric Metric { get; set; } = AlertMetric.CalibrationGap;

    /// <summary>Labels in the window the measure is computed over. Default 2,000.</summary>
    public int Window { get; set; } = 2_000;

    /// <summary>
    /// When set, the rule reads a time window: the labels of the last <c>WindowTime</c> of
    /// event time (at most <see cref="Window"/> of them), e.g. "01:00:00" for the last hour.
    /// Labels without an event time do not enter it. Default null: a count window.
    /// </summary>
    public TimeSpan? WindowTime { get; set; }

    /// <summary>No decision before the window holds this many labels (for detector measures: before this many labels have been seen, the warm-up). Default 1,000.</summary>
    public int MinLabels { get; set; } = 1_000;

    /// <summary>Threshold that raises the alert.</summary>
    public double Raise { get; set; }

    /// <summary>Threshold that clears it again.</summary>
    public double Clear { get; set; }

    /// <summary>Which side is bad. Default <see cref="AlertDirection.Above"/>.</summary>
    public AlertDirection Direction { get; set; } = AlertDirection.Above;

    /// <summary>What the thresholds are measured against. Default <see cref="AlertBaseline.None"/> (absolute).</summary>
    public AlertBaseline RelativeTo { get; set; } = AlertBaseline.None;

    /// <summary>Labels in the reference period when <see cref="RelativeTo"/> is Reference. Default 0 means the window size.</summary>
    public int ReferenceLabels { get; set; }

    /// <summary>
    /// Labels the measure must stay on the good side of <see cref="Clear"/> before the rule
    /// clears. Default null: the rule's <see cref="Window"/>, so a break the window still
    /// holds is not called over, and a measure hovering near its thresholds through one
    /// sustained break reads as one incident. 0 clears at the first label past Clear. Raises are
    /// not delayed. Threshold rules only; the detectors have clears of their own.
    /// </summary>
    public int? ClearHoldLabels { get; set; }

    /// <summary>The clear hold in force: <see cref="ClearHoldLabels"/>, or the window when unset.</summary>
    public int EffectiveClearHold => ClearHoldLabels ?? Window;

    /// <summary>After a clear, labels that must pass before the rule may raise again (0: none). Default 0.</summary>
    public int CooldownLabels { get; set; }

    /// <summary>
    /// For CalibrationDrift: labels between false alarms on a calibrated stream (ARL0, Lorden
    /// 1971). Default 1,000,000.
    /// </summary>
    public double LabelsPerFalseAlarm { get; set; } = 1e6;

    /// <summary>True for measures decided by a sequential detector rather than by Raise/Clear thresholds.</summary>
    public bool IsDetector => Metric is AlertMetric.CalibrationDrift or AlertMetric.LossShift or AlertMetric.LossChange;

    /// <summary>True for measures of calibration (the ones whose raise switches an OnAlert recalibration on).</summary>
    [System.Text.Json.Serialization.JsonIgnore]
    public bool WatchesCalibration => Metric is AlertMetric.CalibrationGap or AlertMetric.CalibrationInTheLarge or AlertMetric.CalibrationDrift
        or AlertMetric.Ece or AlertMetric.CalibrationZ or AlertMetric.HosmerLemeshowP;

    /// <summary>
    /// True for measures of the whole model (its log-loss, alone or against the prior, and the
    /// change detectors on it): with <c>Model:Classes</c> they watch the true class's
    /// probability; every other measure runs once per class, one class against the rest.
    /// </summary>
    [System.Text.Json.Serialization.JsonIgnore]
    public bool WatchesWholeModel => Metric is AlertMetric.LogLoss or AlertMetric.LogLossOverPrior or AlertMetric.LossShift or AlertMetric.LossChange;

    /// <summary>Severity given to the alert. Default <see cref="AlertSeverity.Warning"/>.</summary>
    public AlertSeverity Severity { get; set; } = AlertSeverity.Warning;

    /// <summary>Checks the rule; returns the mistakes found.</summary>
    public IEnumerable<OptionError> Validate(string section)
    {
        if (string.IsNullOrWhiteSpace(Name))
        {
            yield return new($"{section}:Name", "is empty", "Give every rule a short name, e.g. \"calibration-gap\"");
        }
        if (Window is < 10 or > 10_000_000)
        {
            yield return new($"{section}:Window", $"{Window} is outside 10–10,000,000", "Use a few thousand labels, e.g. 2000");
        }
        if (MinLabels < 1 || (MinLabels > Window && !IsDetector))
        {
            yield return new($"{section}:MinLabels", $"{MinLabels} is not between 1 and Window ({Window})", "Use about half the window");
        }
        if (WindowTime is { } span && span <= TimeSpan.Zero)
        {
            yield return new($"{section}:WindowTime", $"{span} is not a positive duration", "Write it as hours:minutes:seconds, e.g. \"01:00:00\", or leave it out for a count window");
        }
        if (RelativeTo == AlertBaseline.Prior && Metric is not (AlertMetric.LogLoss or AlertMetric.Brier))
        {
            yield return new($"{section}:RelativeTo", $"Prior applies to LogLoss and Brier, not {Metric}", "Use RelativeTo None, or the metric LogLossOverPrior");
        }
        if (RelativeTo == AlertBaseline.Reference && Metric is not (AlertMetric.LogLoss or AlertMetric.Brier or AlertMetric.Ece))
        {
            yield return new($"{section}:RelativeTo", $"Reference applies to LogLoss, Brier and Ece, not {Metric} (its reference value can be near 0)", "Use an absolute threshold for this metric");
        }
        if (ReferenceLabels < 0 || (ReferenceLabels > 0 && ReferenceLabels < MinLabels))
        {
            yield return new($"{section}:ReferenceLabels", $"{ReferenceLabels} is negative or below MinLabels ({MinLabels})", "Use 0 (the window size) or at least MinLabels");
        }
        if (ClearHoldLabels is < 0 or > 10_000_000)
        {
            yield return new($"{section}:ClearHoldLabels", $"{ClearHoldLabels} is outside 0–10,000,000", "Leave it out (the window's length), or use 0 to clear at once");
        }
        if (Metric == AlertMetric.ChallengerEvidence)
        {
            yield return new($"{section}:Metric", "ChallengerEvidence is written by the challenger test, not watched by a rule", "Give a challenger configuration with --challenger instead");
        }
        if (CooldownLabels < 0)
        {
            yield return new($"{section}:CooldownLabels", $"{CooldownLabels} is negative", "Use 0 for no cool-down, or a number of labels");
        }
        if (!(LabelsPerFalseAlarm >= 100) || !double.IsFinite(LabelsPerFalseAlarm))
        {
            yield return new($"{section}:LabelsPerFalseAlarm", $"{LabelsPerFalseAlarm} is below 100 or not a number", "Use 1000000 (one false alarm per million labels on a calibrated stream)");
        }
        if (IsDetector)
        {
            yield break;
        }
        if (!double.IsFinite(Raise) || !double.IsFinite(Clear))
        {
            yield return new($"{section}:Raise", "Raise and Clear must both be finite numbers", "Set both thresholds");
        }
        else if (Direction == AlertDirection.Above ? Clear >= Raise : Clear <= Raise)
        {
            yield return new($"{section}:Clear", $"{Clear} does not lie on the good side of Raise ({Raise}) for direction {Direction}",
                Direction == AlertDirection.Above ? "Make Clear lower than Raise" : "Make Clear higher than Raise");
        }
    }

    /// <summary>
    /// The rules used when a configuration names none. Chosen on the demo stream (README,
    /// "Defaults"): a gap of 0.06 over 1,000 labels is about four standard errors at a base
    /// rate of 0.3, so it stays quiet while the stream is stable, and it is raised within a
    /// few hundred labels of the storm's start and end, for AdaGrad and FTRL alike. The
    /// sequential calibration test (critical) allows one false alarm per million labels on a
    /// calibrated stream and came within 1.1× the sequential limit on known breaks
    /// (tests/Driftline.AlertQuality); on the demo it is raised 440 labels into the storm.
    /// </summary>
    public static List<AlertRuleOptions> Defaults() =>
    [
        new() { Name = "calibration-gap", Metric = AlertMetric.CalibrationGap, Window = 1_000, MinLabels = 1_000, Raise = 0.06, Clear = 0.03 },
        new() { Name = "calibration-drift", Metric = AlertMetric.CalibrationDrift, Window = 1_000, MinLabels = 2_000, LabelsPerFalseAlarm = 1e6, Severity = AlertSeverity.Critical },
        new() { Name = "worse-than-prior", Metric = AlertMetric.LogLossOverPrior, Window = 2_000, MinLabels = 1_000, Raise = 1.0, Clear = 0.95 },
    ];

    /// <summary>
    /// This rule as it runs for each of <paramref name="classes"/> classes one against the rest:
    /// the sequential test's labels per false alarm are multiplied by the number of classes
    /// (Bonferroni), so the K tests together keep the false-alarm promise made for the model.
    /// </summary>
    public AlertRuleOptions PerClass(int classes)
    {
        var copy = (AlertRuleOptions)MemberwiseClone();
        copy.LabelsPerFalseAlarm = LabelsPerFalseAlarm * classes;
        return copy;
    }
}
