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
}
