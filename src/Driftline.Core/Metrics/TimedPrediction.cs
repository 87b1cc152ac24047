namespace Driftline.Core.Metrics;

/// <summary>A graded prediction stamped with the event time that places it in a <see cref="TimeWindow"/>.</summary>
/// <param name="Time">Event time; only the instant matters, the offset is ignored.</param>
/// <param name="P">Predicted probability of the positive class, in [0, 1].</param>
/// <param name="Y">Observed outcome, 0 or 1.</param>
internal readonly record struct TimedPrediction(DateTimeOffset Time, double P, int Y);
