using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// The ids of the most recent events that came with their own label, at most a fixed number,
/// oldest forgotten first. A late label for one of them is a second label (a duplicate), not a
/// label for an unknown id. Kept apart from the pending store so these ids never take the
/// places of predictions still waiting for a label. O(1) per operation.
/// </summary>
/// <remarks>
/// The ids sit in a ring; an open-addressing table with linear probing finds them (Knuth 1973,
/// "The Art of Computer Programming" vol. 3, §6.4, algorithm L, deletion by backward shift,
/// algorithm R). Each ring place has its own table entry (the id's hash and its place, eight
/// bytes), so an id held twice simply has two entries, and forgetting the oldest finds its
/// entry by place without comparing strings. Why not a <see cref="Dictionary{TKey, TValue}"/>
/// of counts: on a stream where every event carries its label this runs on every event, and the
/// dictionary's lookup of the oldest, its removal and the new id's insert were three probes
/// into bucket, entry and key arrays, 9% of the replay's samples
/// (tests/Driftline.Benchmarks README, wide workload). The table is at least twice the ring, so
/// it is never more than half full and every probe sequence ends at an empty entry.
/// </remarks>
internal sealed class RecentIds
{
    private readonly string?[] _ring;
    private readonly int[] _hashes;
    private readonly Entry[] _entries;
    private readonly int _mask;
    private int _next;
    private int _held;

    /// <summary>Creates a memory of at most <paramref name="capacity"/> ids.</summary>
    public RecentIds(int capacity)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        _ring = new string?[capacity];
        _hashes = new int[capacity];
        int size = (int)Math.Max(16, System.Numerics.BitOperations.RoundUpToPowerOf2((uint)capacity * 2));
        _entries = new Entry[size];
        _mask = size - 1;
    }

    /// <summary>Ids held.</summary>
    public int Count => _held;

    /// <summary>Remembers <paramref name="id"/>, forgetting the oldest when full.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Add(string id)
    {
        int place = _next;
        if (_ring[place] is not null)
        {
            Remove(_hashes[place], place);
            _held--;
        }
        int hash = id.GetHashCode(StringComparison.Ordinal);
        _ring[place] = id;
        _hashes[place] = hash;
        int i = hash & _mask;
        while (_entries[i].Place != 0)
        {
            i = (i + 1) & _mask;
        }
        _entries[i] = new Entry(hash, place + 1);
        _held++;
        _next = place + 1 == _ring.Length ? 0 : place + 1;
    }

    /// <summary>True when <paramref name="id"/> is among the ids held.</summary>
    public bool Contains(string id)
    {
        int hash = id.GetHashCode(StringComparison.Ordinal);
        for (int i = hash & _mask; ; i = (i + 1) & _mask)
        {
            ref readonly Entry e = ref _entries[i];
            if (e.Place == 0)
            {
                return false;
            }
            if (e.Hash == hash && string.Equals(_ring[e.Place - 1], id, StringComparison.Ordinal))
            {
                return true;
            }
        }
    }

    /// <summary>The ids held, oldest first (for snapshots).</summary>
    public IEnumerable<string> Entries()
    {
        for (int i = 0; i < _ring.Length; i++)
        {
            if (_ring[(_next + i) % _ring.Length] is { } id)
            {
                yield return id;
            }
        }
    }

    // Removes the entry of ring place `place`, whose id hashed to `hash`.
    private void Remove(int hash, int place)
    {
        int i = hash & _mask;
        while (_entries[i].Place != place + 1)
        {
            Debug.Assert(_entries[i].Place != 0, "every held place has its entry");
            i = (i + 1) & _mask;
        }
        // Backward shift: pull up every later entry of the run that may sit at or before the
        // hole, so no probe sequence is cut by an empty entry.
        int hole = i;
        for (int j = (i + 1) & _mask; _entries[j].Place != 0; j = (j + 1) & _mask)
        {
            int home = _entries[j].Hash & _mask;
            bool movable = hole <= j ? home <= hole || home > j : home <= hole && home > j;
            if (movable)
            {
                _entries[hole] = _entries[j];
                hole = j;
            }
        }
        _entries[hole] = default;
    }

    private readonly record struct Entry(int Hash, int Place);
}
