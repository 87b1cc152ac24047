namespace Driftline.Core.Snapshots;

/// <summary>
/// The one array an engine copies a store into at a snapshot (<see cref="RecordCopy"/>), handed
/// back by whoever wrote the snapshot (<see cref="EngineSnapshot.ReleaseCopies"/>) so the next
/// snapshot reuses it: a checkpoint then costs no new block of megabytes on the large-object
/// heap. A snapshot taken while the array is out (nobody released the last one: a saved model,
/// a test holding several) gets a new array, so a snapshot is never changed by a later one.
/// </summary>
internal sealed class RecordCopyPool
{
    private byte[]? _spare;

    /// <summary>The kept array, or an empty one when it is out; the taker owns it until it returns it.</summary>
    public byte[] Take() => Interlocked.Exchange(ref _spare, null) ?? [];

    /// <summary>Gives an array back for the next snapshot (from the writer thread).</summary>
    public void Return(byte[] buffer) => Volatile.Write(ref _spare, buffer);
}
