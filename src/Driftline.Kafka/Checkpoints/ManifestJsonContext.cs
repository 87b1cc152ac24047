using System.Text.Json.Serialization;

namespace Driftline.Kafka.Checkpoints;

/// <summary>Compile-time JSON metadata for the checkpoint topic's manifests (snake-case names, as before), so a natively compiled build needs no reflection.</summary>
[JsonSourceGenerationOptions(PropertyNamingPolicy = JsonKnownNamingPolicy.SnakeCaseLower)]
[JsonSerializable(typeof(CheckpointManifest))]
internal sealed partial class ManifestJsonContext : JsonSerializerContext;
