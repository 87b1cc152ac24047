namespace Driftline.Core.Scoring;

/// <summary>
/// Where the scoring side of an engine stood at one point of the stream: what a metric row, an
/// alert or a report sample quotes besides the graded measures. With grading on its own stage,
/// these are the values captured when the label (or prediction) was scored, not the scoring
/// thread's current ones, so every output is the same as with grading inline.
/// </summary>
/// <param name="Events">Events scored.</param>
/// <param name="Labels">Labels graded.</param>
/// <param name="LateLabels">Late labels joined.</param>
/// <param name="Expired">Waiting predictions expired.</param>
/// <param name="ClockTicks">Latest event time, UTC ticks.</param>
internal readonly record struct EnginePosition(long Events, long Labels, long LateLabels, long Expired, long ClockTicks);
