namespace Driftline.Kafka.Checkpoints;

/// <summary>One record for the checkpoint topic: its key and value (a null value is a tombstone).</summary>
/// <param name="Key">UTF-8 text key, see <see cref="TopicCheckpointCodec"/>.</param>
/// <param name="Value">A chunk, a manifest, or null to delete the key on compaction.</param>
internal readonly record struct CheckpointRecord(string Key, byte[]? Value);
