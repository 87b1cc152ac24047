namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// One piece of a checkpoint's payload as read back from the checkpoint topic: the header
/// every chunk carries, and its bytes (a view of the record's value, not a copy).
/// </summary>
/// <param name="Generation">The checkpoint it belongs to (see <see cref="CheckpointManifest.Generation"/>).</param>
/// <param name="Slot">The key set it was written under, 0 or 1.</param>
/// <param name="Index">Its place, from 0.</param>
/// <param name="Count">Chunks of its checkpoint.</param>
/// <param name="Length">Bytes of the whole payload.</param>
/// <param name="Hash">XxHash64 of the whole payload.</param>
/// <param name="Data">This chunk's share of the payload.</param>
internal readonly record struct CheckpointChunk(long Generation, int Slot, int Index, int Count, long Length, ulong Hash, ArraySegment<byte> Data);
