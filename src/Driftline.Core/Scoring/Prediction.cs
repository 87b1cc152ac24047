namespace Driftline.Core.Scoring;

/// <summary>A probability emitted for one event.</summary>
/// <param name="Id">Event id.</param>
/// <param name="Key">Model key (the default key when the event named none).</param>
/// <param name="P">P(label = 1).</param>
/// <param name="ModelVersion">Labels the model had learned from when it scored.</param>
/// <param name="TimeTicks">The event's time as UTC ticks, or no time.</param>
internal readonly record struct Prediction(string Id, string Key, double P, long ModelVersion, long TimeTicks);
