namespace Driftline.Core.Snapshots;

/// <summary>
/// A store's records (<see cref="Scoring.RecordArena"/>) copied back to back in one block when
/// a snapshot is taken, into the array of a <see cref="RecordCopyPool"/>: what the snapshot
/// keeps alive until it is written is that one array, not an object an entry.
/// </summary>
internal sealed class RecordCopy
{
    private byte[]? _records;
    private readonly int _length;
    private readonly RecordCopyPool _pool;

    /// <summary>A copy of <paramref name="count"/> records, the first <paramref name="length"/> bytes of <paramref name="records"/>, taken from <paramref name="pool"/>.</summary>
    public RecordCopy(byte[] records, int length, int count, RecordCopyPool pool)
    {
        _records = records;
        _length = length;
        Count = count;
        _pool = pool;
    }

    /// <summary>Records held.</summary>
    public int Count { get; }

    /// <summary>The records, oldest first; refused once released.</summary>
    public ReadOnlySpan<byte> Records => _records is { } records
        ? records.AsSpan(0, _length)
        : throw new InvalidOperationException("the snapshot's copied records were released after it was written");

    /// <summary>Gives the array back to the pool; the records may not be read after.</summary>
    public void Release()
    {
        if (_records is { } records)
        {
            _records = null;
            _pool.Return(records);
        }
    }
}
