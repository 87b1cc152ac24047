using System.Text.Json.Serialization;

namespace Driftline.Core.Snapshots;

/// <summary>
/// Compile-time JSON metadata for snapshots: no reflection at run time, so writing the final
/// model or a checkpoint costs its bytes, not a warm-up of the serializer.
/// </summary>
[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.SnakeCaseLower,
    Converters = [typeof(EnumNamesOnly)],
    NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals,
    // A repeated property is damage (or an edit gone wrong), not "the last one wins".
    AllowDuplicateProperties = false)]
[JsonSerializable(typeof(EngineSnapshot))]
// The converters of the pending entries and the inline-labelled ids read and write lists with this metadata.
[JsonSerializable(typeof(List<PendingSnapshot>))]
[JsonSerializable(typeof(List<string>))]
internal sealed partial class SnapshotJsonContext : JsonSerializerContext;
