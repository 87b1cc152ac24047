using System.Runtime.CompilerServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// The ids of the most recent events that came with their own label, at most a fixed number,
/// oldest forgotten first. A late label for one of them is a second label (a duplicate), not a
/// label for an unknown id. Kept apart from the pending store so these ids never take the
/// places of predictions still waiting for a label. O(1) per operation.
/// </summary>
/// <remarks>
/// <para>
/// The same machinery as the pending store, with records that are only the id's key
/// (<see cref="IdKey"/>): a byte arena in arrival order (<see cref="RecordArena"/>) and a table
/// of four-byte locations (<see cref="PendingIndex"/>), about 18 bytes an id for an ASCII id of
/// eight characters, where a ring of strings with a table of hashes kept some 70 and every id
/// string alive. An id added again is filed under its newest copy; an older copy leaving finds
/// no entry pointing at it, so the id is held until its last copy leaves. On a stream where
/// every event carries its label this runs on every event.
/// </para>
/// <para>
/// The table is filled lazily: an add only writes the id's bytes into the arena, and the ids
/// added since the last question are filed when <see cref="Contains"/> is next asked (an id
/// that leaves before then is never filed). The answers are those of filing at each add, but a
/// stream whose labels all come inline, which never asks, pays no table work at all: filing
/// and unfiling at every event was 9% of a wide replay's processor time
/// (tests/Driftline.Benchmarks README).
/// </para>
/// </remarks>
internal sealed class RecentIds
{
    private readonly RecordArena _arena = new();
    private readonly PendingIndex _byId;
    private readonly int _capacity;
    private byte[] _key = new byte[64];
    private int _count;
    // The newest _unfiled ids are in the arena but not yet in the table; the oldest of them at _firstUnfiled.
    private int _unfiled;
    private uint _firstUnfiled;

    /// <summary>Creates a memory of at most <paramref name="capacity"/> ids.</summary>
    public RecentIds(int capacity)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        _capacity = capacity;
        _byId = new PendingIndex(_arena, capacity);
    }

    /// <summary>Ids held, counting an id added twice once for each copy.</summary>
    public int Count => _count;

    /// <summary>Remembers <paramref name="id"/>, forgetting the oldest when full.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Add(string id)
    {
        if (_count == _capacity)
        {
            Forget();
        }
        int length = IdKey.Encode(id, ref _key);
        uint location;
        Span<byte> bytes;
        while ((location = _arena.TryReserve(length, out bytes)) == RecordArena.NoSpace)
        {
            Forget();
        }
        _key.AsSpan(0, length).CopyTo(bytes);
        if (_unfiled++ == 0)
        {
            _firstUnfiled = location;
        }
        _count++;
    }

    /// <summary>True when <paramref name="id"/> is among the ids held.</summary>
    public bool Contains(string id)
    {
        if (_count == 0)
        {
            return false;
        }
        FileAdded();
        int length = IdKey.Encode(id, ref _key);
        var key = _key.AsSpan(0, length);
        return _byId.Find(key, IdKey.Hash(key)) != PendingIndex.None;
    }

    // Files the ids added since the last question, oldest first, so a later copy of an id
    // takes its entry as it would have at its own add.
    private void FileAdded()
    {
        uint location = _firstUnfiled;
        for (; _unfiled > 0; _unfiled--)
        {
            var record = _arena.At(location);
            int length = IdKey.Length(record);
            var key = record[..length];
            _byId.Set(key, IdKey.Hash(key), location);
            if (_unfiled > 1)
            {
                location = _arena.After(location, length);
            }
        }
    }

    /// <summary>The ids held, oldest first (for snapshots).</summary>
    public IEnumerable<string> Entries()
    {
        if (_count == 0)
        {
            yield break;
        }
        uint location = _arena.Tail;
        for (int i = 0; i < _count; i++)
        {
            int length = IdKey.Length(_arena.At(location));
            yield return IdKey.Decode(_arena.At(location)[..length]);
            location = _arena.After(location, length);
        }
    }

    /// <summary>Copies the ids' keys, oldest first, into <paramref name="buffer"/> (<see cref="RecordArena.CopyLive"/>); returns their length in bytes.</summary>
    public int CopyRecords(ref byte[] buffer) => _arena.CopyLive(ref buffer);

    private void Forget()
    {
        uint location = _arena.Tail;
        var record = _arena.At(location);
        int length = IdKey.Length(record);
        if (_unfiled == _count)
        {
            // The oldest id was never filed: nothing in the table points at it.
            if (--_unfiled > 0)
            {
                _firstUnfiled = _arena.After(location, length);
            }
        }
        else
        {
            _byId.Remove(IdKey.Hash(record[..length]), location);
        }
        _arena.FreeTail(length);
        _count--;
    }
}
