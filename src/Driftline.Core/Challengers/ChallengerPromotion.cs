namespace Driftline.Core.Challengers;

/// <summary>A challenger that replaced the champion (<c>Challengers:AutoPromote</c>).</summary>
/// <param name="Challenger">Its configuration name.</param>
/// <param name="Labels">The champion's graded labels when it was declared better (the new champion serves from the next record).</param>
/// <param name="EventId">The event whose label decided.</param>
/// <param name="TimeTicks">That event's time, or no time.</param>
internal sealed record ChallengerPromotion(string Challenger, long Labels, string EventId, long TimeTicks);
