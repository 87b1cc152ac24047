using Driftline.Core.Options;

namespace Driftline.Kafka.Worker;

/// <summary>A configuration the worker scores in the shadow and judges against the champion (<c>run --challenger FILE</c>).</summary>
/// <param name="Name">Its name: the file name without extension; keys its state in the checkpoint.</param>
/// <param name="Options">Its validated options.</param>
internal sealed record ChallengerConfig(string Name, DriftlineOptions Options);
