namespace Driftline.Kafka.Worker;

/// <summary>A consumed record waiting in its partition's queue for the time-order merge.</summary>
/// <param name="Offset">Its offset in the source partition.</param>
/// <param name="TimestampMs">The message timestamp (ms since the Unix epoch): the merge's order.</param>
/// <param name="Key">The message key, kept for the dead letter.</param>
/// <param name="Value">The record's bytes (JSON).</param>
/// <param name="QueuedAt">When it was queued (<see cref="Environment.TickCount64"/>), for the label hold.</param>
internal readonly record struct BufferedRecord(long Offset, long TimestampMs, byte[]? Key, byte[] Value, long QueuedAt = 0);
