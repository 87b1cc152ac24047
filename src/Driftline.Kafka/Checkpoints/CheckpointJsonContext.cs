using System.Text.Json.Serialization;
using Driftline.Core.Snapshots;

namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// Compile-time JSON metadata for partition checkpoints, with the options the reflection-based
/// serializer had here (snake-case names, enums by name, named floating-point literals), so the
/// bytes are the same; no reflection at run time, which a natively compiled build cannot do.
/// </summary>
[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.SnakeCaseLower,
    Converters = [typeof(EnumNamesOnly)],
    NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals)]
[JsonSerializable(typeof(PartitionCheckpoint))]
// The converters of the pending entries and the inline-labelled ids read and write lists with this metadata.
[JsonSerializable(typeof(List<PendingSnapshot>))]
[JsonSerializable(typeof(List<string>))]
internal sealed partial class CheckpointJsonContext : JsonSerializerContext;
