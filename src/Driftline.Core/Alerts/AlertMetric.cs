namespace Driftline.Core.Alerts;

/// <summary>A window measure an alert rule can watch.</summary>
internal enum AlertMetric
{
    /// <summary>Mean log-loss.</summary>
    LogLoss,

    /// <summary>Brier score.</summary>
    Brier,

    /// <summary>Expected calibration error over equal-width bins.</summary>
    Ece,

    /// <summary>Mean p − mean y: positive when the model over-predicts.</summary>
    CalibrationInTheLarge,

    /// <summary>|mean p − mean y|: the calibration gap in either direction.</summary>
    CalibrationGap,

    /// <summary>The model's log-loss divided by the class-prior baseline's: above 1, the model is worse than no model.</summary>
    LogLossOverPrior,

    /// <summary>
    /// |Σp − Σy| / √Σp(1 − p): the calibration gap in standard errors of a calibrated model,
    /// so one threshold means the same at any window size and base rate.
    /// </summary>
    CalibrationZ,

    /// <summary>
    /// The sequential calibration test: CUSUMs over a family of recalibrations (log-odds shifts
    /// and slopes), raised when any reaches ln(LabelsPerFalseAlarm × alternatives) and cleared
    /// when all have fallen back (see <see cref="Detectors.CalibrationCusumDetector"/>). The
    /// value is the largest CUSUM; thresholds come from the detector, not Raise/Clear.
    /// </summary>
    CalibrationDrift,

    /// <summary>Page–Hinkley on the per-label log-loss: raised at a detected rise, cleared a window later without one.</summary>
    LossShift,

    /// <summary>ADWIN on the per-label log-loss: raised at a detected change, cleared a window later without one.</summary>
    LossChange,

    /// <summary>Hosmer–Lemeshow p-value over the window (10 risk groups), computed every Window/20 labels; use Direction Below.</summary>
    HosmerLemeshowP,

    /// <summary>Rolling AUC over the window: ranking quality, not calibration; use Direction Below.</summary>
    Auc,

    /// <summary>
    /// Not a rule's measure: the evidence of a challenger configuration over the champion (the
    /// log of the betting wealth of <see cref="Challengers.PairedLossTest"/>), on the
    /// <c>challenger-better</c> line written when it reaches ln(1/Challengers:ErrorRate).
    /// </summary>
    ChallengerEvidence,
}
