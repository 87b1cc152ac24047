namespace Driftline.Core.Challengers;

/// <summary>A label one side has graded and the other not yet: kept until the other grades the same id.</summary>
/// <param name="Id">The labelled event's id.</param>
/// <param name="TimeTicks">Its event time, or no time.</param>
/// <param name="LogLoss">The side's log-loss on it.</param>
/// <param name="Sequence">Its place among the side's labels that waited, from 1.</param>
internal sealed record WaitingLoss(string Id, long TimeTicks, double LogLoss, long Sequence);
