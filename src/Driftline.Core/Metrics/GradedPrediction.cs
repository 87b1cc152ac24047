namespace Driftline.Core.Metrics;

/// <summary>One graded prediction: a probability and the outcome it predicted.</summary>
/// <param name="P">Predicted probability of the positive class, in [0, 1].</param>
/// <param name="Y">Observed outcome, 0 or 1.</param>
/// <remarks>
/// The record itself does not validate, so that restoring a snapshot costs nothing until the
/// contents reach a window; every accumulator checks each value with
/// <see cref="PredictionScores.Validate(double, int)"/> on the way in.
/// </remarks>
internal readonly record struct GradedPrediction(double P, int Y);
