using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// Variable-length byte records in arrival order, freed oldest first: a queue of 64 KB chunks
/// written front to back. A record is addressed by a 32-bit location (chunk number in the high
/// 16 bits, byte position in the low 16), so an index entry is four bytes. A record that does
/// not fit in what is left of the newest chunk starts the next one (at most a record's length
/// is lost at a chunk's end); one larger than a chunk gets a chunk of its own. A chunk goes
/// back once its last record is freed, so memory follows the records held, not the stream's
/// length nor the store's configured maximum.
/// </summary>
internal sealed class RecordArena
{
    /// <summary>Bytes of a standard chunk.</summary>
    public const int ChunkBytes = 1 << PositionBits;

    /// <summary>Returned by <see cref="TryReserve"/> when every chunk number is in use.</summary>
    public const uint NoSpace = uint.MaxValue;

    private const int PositionBits = 16;

    // One number fewer than 16 bits can count, so no location is uint.MaxValue (NoSpace) and
    // location + 1 (the index's "occupied" mark) never wraps to 0.
    private const int MaxChunks = (1 << (32 - PositionBits)) - 1;

    // Released standard chunks kept for reuse, so a store that cycles at a steady size stops
    // allocating; beyond these a released chunk goes to the collector.
    private const int MaxSpares = 2;

    private byte[]?[] _chunks = new byte[]?[4];
    private int[] _used = new int[4];
    private int[] _next = new int[4];
    private int[] _freeNumbers = new int[4];
    private int _freeCount;
    private int _numbersMade;
    private readonly Stack<byte[]> _spares = new();
    private int _writeChunk = -1;
    private int _writePos;
    private int _tailChunk = -1;
    private int _tailPos;

    /// <summary>True when no record is held.</summary>
    public bool IsEmpty => _tailChunk < 0 || (_tailChunk == _writeChunk && _tailPos == _writePos);

    /// <summary>Location of the oldest record (the arena must not be empty).</summary>
    public uint Tail
    {
        get
        {
            Debug.Assert(!IsEmpty, "the tail of an empty arena");
            return ((uint)_tailChunk << PositionBits) | (uint)_tailPos;
        }
    }

    /// <summary>The bytes from <paramref name="location"/> to the end of its chunk's records.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public Span<byte> At(uint location)
    {
        int chunk = (int)(location >> PositionBits);
        int pos = (int)(location & (ChunkBytes - 1));
        return _chunks[chunk].AsSpan(pos, _used[chunk] - pos);
    }

    /// <summary>
    /// Reserves <paramref name="size"/> bytes after the newest record; returns their location,
    /// or <see cref="NoSpace"/> when every chunk number is taken (about 4 GB held).
    /// </summary>
    public uint TryReserve(int size, out Span<byte> bytes)
    {
        Debug.Assert(size > 0, "a record has at least one byte");
        if (_writeChunk >= 0 && _chunks[_writeChunk]!.Length - _writePos >= size)
        {
            uint location = ((uint)_writeChunk << PositionBits) | (uint)_writePos;
            bytes = _chunks[_writeChunk].AsSpan(_writePos, size);
            _writePos += size;
            _used[_writeChunk] = _writePos;
            return location;
        }
        if (IsEmpty && _writeChunk >= 0 && _chunks[_writeChunk]!.Length >= size)
        {
            // Nothing held: start the current chunk over rather than take another.
            _tailChunk = _writeChunk;
            _tailPos = 0;
            _writePos = 0;
            return TryReserve(size, out bytes);
        }
        int number = TakeNumber();
        if (number < 0)
        {
            bytes = default;
            return NoSpace;
        }
        var chunk = size <= ChunkBytes ? (_spares.Count > 0 ? _spares.Pop() : GC.AllocateUninitializedArray<byte>(ChunkBytes)) : GC.AllocateUninitializedArray<byte>(size);
        _chunks[number] = chunk;
        _used[number] = size;
        _next[number] = -1;
        if (_writeChunk >= 0 && !IsEmpty)
        {
            _next[_writeChunk] = number;
        }
        else
        {
            if (_writeChunk >= 0)
            {
                Release(_writeChunk);
            }
            _tailChunk = number;
            _tailPos = 0;
        }
        _writeChunk = number;
        _writePos = size;
        bytes = chunk.AsSpan(0, size);
        return (uint)number << PositionBits;
    }

    /// <summary>Frees the oldest record, <paramref name="size"/> bytes long.</summary>
    public void FreeTail(int size)
    {
        Debug.Assert(!IsEmpty, "freeing from an empty arena");
        _tailPos += size;
        Debug.Assert(_tailPos <= _used[_tailChunk], "a record ends inside its chunk");
        if (_tailPos == _used[_tailChunk] && _tailChunk != _writeChunk)
        {
            int done = _tailChunk;
            _tailChunk = _next[done];
            _tailPos = 0;
            Release(done);
        }
    }

    /// <summary>The location after the record at <paramref name="location"/>, <paramref name="size"/> bytes long (for walking the records in order).</summary>
    public uint After(uint location, int size)
    {
        int chunk = (int)(location >> PositionBits);
        int pos = (int)(location & (ChunkBytes - 1)) + size;
        if (pos == _used[chunk] && chunk != _writeChunk)
        {
            return (uint)_next[chunk] << PositionBits;
        }
        return ((uint)chunk << PositionBits) | (uint)pos;
    }

    /// <summary>Bytes from the oldest record to the end of the newest, without the unused ends of chunks.</summary>
    public int LiveBytes
    {
        get
        {
            if (IsEmpty)
            {
                return 0;
            }
            long total = 0;
            for (int chunk = _tailChunk, pos = _tailPos; ; chunk = _next[chunk], pos = 0)
            {
                total += _used[chunk] - pos;
                if (chunk == _writeChunk)
                {
                    return checked((int)total);
                }
            }
        }
    }

    /// <summary>
    /// Copies every record, oldest first, into <paramref name="buffer"/> back to back (records
    /// never cross a chunk, so the copy is the same records walked in the same order), one block
    /// per chunk; a buffer too small is replaced by a larger array. Returns the bytes copied
    /// (<see cref="LiveBytes"/>). A snapshot of a store as one block, decoded later (for a
    /// checkpoint, on the writer thread) instead of an object graph the collector has to trace.
    /// </summary>
    public int CopyLive(ref byte[] buffer)
    {
        int length = LiveBytes;
        if (buffer.Length < length)
        {
            // Some room to grow, so a store filling up does not make a new array every checkpoint.
            buffer = GC.AllocateUninitializedArray<byte>(length + (length / 4));
        }
        if (length == 0)
        {
            return 0;
        }
        var into = buffer.AsSpan();
        int written = 0;
        for (int chunk = _tailChunk, pos = _tailPos; ; chunk = _next[chunk], pos = 0)
        {
            var part = _chunks[chunk].AsSpan(pos, _used[chunk] - pos);
            part.CopyTo(into[written..]);
            written += part.Length;
            if (chunk == _writeChunk)
            {
                return written;
            }
        }
    }

    private int TakeNumber()
    {
        if (_freeCount > 0)
        {
            return _freeNumbers[--_freeCount];
        }
        if (_numbersMade == MaxChunks)
        {
            return -1;
        }
        if (_numbersMade == _chunks.Length)
        {
            int size = Math.Min(MaxChunks, _chunks.Length * 2);
            Array.Resize(ref _chunks, size);
            Array.Resize(ref _used, size);
            Array.Resize(ref _next, size);
            Array.Resize(ref _freeNumbers, size);
        }
        return _numbersMade++;
    }

    private void Release(int number)
    {
        var chunk = _chunks[number]!;
        if (chunk.Length == ChunkBytes && _spares.Count < MaxSpares)
        {
            _spares.Push(chunk);
        }
        _chunks[number] = null;
        _freeNumbers[_freeCount++] = number;
    }
}
