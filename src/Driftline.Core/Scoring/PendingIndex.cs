using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// Finds the ring slot of a pending prediction by its id: an open-addressing table with
/// linear probing (Knuth 1973, "The Art of Computer Programming" vol. 3, §6.4, algorithm L,
/// with deletion by backward shift, algorithm R). Each entry is the id's hash and its slot,
/// eight bytes, so a probe costs one cache line, and an eviction finds its entry by slot
/// without comparing strings.
/// </summary>
/// <remarks>
/// Why not <see cref="Dictionary{TKey, TValue}"/>: with hundreds of thousands of ids held, its
/// bucket array, entry array and key strings are three cache misses per operation, and the
/// store makes three operations per late label (add, join, evict). The table is at least twice
/// the ring, so it is never more than half full and every probe sequence ends at an empty entry.
/// </remarks>
internal sealed class PendingIndex
{
    private readonly Entry[] _entries;
    private readonly int _mask;
    private readonly PendingPrediction?[] _ring;

    /// <summary>Creates an empty index over <paramref name="ring"/>, whose slots hold the ids.</summary>
    public PendingIndex(PendingPrediction?[] ring)
    {
        _ring = ring;
        int size = (int)Math.Max(16, System.Numerics.BitOperations.RoundUpToPowerOf2((uint)ring.Length * 2));
        _entries = new Entry[size];
        _mask = size - 1;
    }

    /// <summary>The hash the index files <paramref name="id"/> under.</summary>
    public static int Hash(string id) => id.GetHashCode(StringComparison.Ordinal);

    /// <summary>The slot holding <paramref name="id"/>, or −1.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public int Find(string id, int hash)
    {
        for (int i = hash & _mask; ; i = (i + 1) & _mask)
        {
            ref readonly Entry e = ref _entries[i];
            if (e.Slot == 0)
            {
                return -1;
            }
            if (e.Hash == hash && string.Equals(_ring[e.Slot - 1]!.Id, id, StringComparison.Ordinal))
            {
                return e.Slot - 1;
            }
        }
    }

    /// <summary>Files <paramref name="id"/> under <paramref name="slot"/>; returns the slot it had before, or −1.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public int Set(string id, int hash, int slot)
    {
        for (int i = hash & _mask; ; i = (i + 1) & _mask)
        {
            ref Entry e = ref _entries[i];
            if (e.Slot == 0)
            {
                e = new Entry(hash, slot + 1);
                return -1;
            }
            if (e.Hash == hash && string.Equals(_ring[e.Slot - 1]!.Id, id, StringComparison.Ordinal))
            {
                int previous = e.Slot - 1;
                e = new Entry(hash, slot + 1);
                return previous;
            }
        }
    }

    /// <summary>
    /// Removes the entry that points at <paramref name="slot"/> (its id hashing to
    /// <paramref name="hash"/>); nothing when the id has been filed under a later slot since.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Remove(int hash, int slot)
    {
        int i = hash & _mask;
        while (_entries[i].Slot != slot + 1)
        {
            if (_entries[i].Slot == 0)
            {
                return;
            }
            i = (i + 1) & _mask;
        }
        // Backward shift: pull up every later entry of the run that may sit at or before the
        // hole, so no probe sequence is cut by an empty entry.
        int hole = i;
        for (int j = (i + 1) & _mask; _entries[j].Slot != 0; j = (j + 1) & _mask)
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
        Debug.Assert(Find(_ring[slot]!.Id!, hash) != slot, "a removed slot is no longer found");
    }

    private readonly record struct Entry(int Hash, int Slot);
}
