namespace Driftline.Core.Scoring;

/// <summary>A probability emitted for one event.</summary>
/// <param name="Id">Event id.</param>
/// <param name="Key">Model key (the default key when the event named none).</param>
/// <param name="P">P(label = 1) for a binary model; NaN for a multiclass one.</param>
/// <param name="ModelVersion">Labels the model had learned from when it scored.</param>
/// <param name="TimeTicks">The event's time as UTC ticks, or no time.</param>
/// <param name="Classes">A multiclass model's probabilities in the order of <paramref name="ClassNames"/> (summing to 1); null for binary.</param>
/// <param name="ClassNames">The class names (<c>Model:Classes</c>); null for binary.</param>
/// <param name="Raw">With recalibration on: the model's own probability, <paramref name="P"/> being the served one; NaN otherwise.</param>
/// <param name="RawClasses">Multiclass with recalibration on: the model's own class probabilities, <paramref name="Classes"/> being the served ones; null otherwise.</param>
internal readonly record struct Prediction(string Id, string Key, double P, long ModelVersion, long TimeTicks,
    double[]? Classes = null, IReadOnlyList<string>? ClassNames = null, double Raw = double.NaN, double[]? RawClasses = null);
