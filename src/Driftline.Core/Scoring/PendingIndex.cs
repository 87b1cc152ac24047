using System.Runtime.CompilerServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// Finds a record of a <see cref="RecordArena"/> by the id key it starts with: an
/// open-addressing table with linear probing (Knuth 1973, "The Art of Computer Programming"
/// vol. 3, §6.4, algorithm L, with deletion by backward shift, algorithm R). Each entry is the
/// record's location plus one (0 marks an empty entry), four bytes; a probe compares the key
/// with the record's own, and the home of an entry moved by a deletion is found by hashing
/// that record's key again, so the table holds no copy of ids nor hashes.
/// </summary>
/// <remarks>
/// Why not <see cref="Dictionary{TKey, TValue}"/>: its bucket array, entry array and key strings
/// are three cache misses per operation and some 40 bytes per id on top of the string, against
/// a budget of 100 bytes for a whole waiting prediction. The table is twice the number of records
/// it may hold, so it is never more than half full and every probe sequence ends at
/// an empty entry.
/// </remarks>
internal sealed class PendingIndex
{
    /// <summary>Returned when no record has the key.</summary>
    public const uint None = uint.MaxValue;

    private readonly uint[] _entries;
    private readonly int _size;
    private readonly RecordArena _arena;

    /// <summary>Creates an empty index for at most <paramref name="capacity"/> records of <paramref name="arena"/>.</summary>
    public PendingIndex(RecordArena arena, int capacity)
    {
        _arena = arena;
        // Exactly twice the records, not the next power of two (up to four times): an entry's
        // home is the hash scaled to the table (Lemire 2019, "Fast Random Integer Generation in
        // an Interval"), a multiply where a mask would need a power-of-two size.
        _size = (int)Math.Min(Array.MaxLength, Math.Max(16L, 2L * capacity));
        _entries = new uint[_size];
    }

    /// <summary>The location of the record whose key is <paramref name="key"/>, or <see cref="None"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public uint Find(ReadOnlySpan<byte> key, int hash)
    {
        for (int i = Home(hash); ; i = Next(i))
        {
            uint e = _entries[i];
            if (e == 0)
            {
                return None;
            }
            if (KeyOf(e - 1).SequenceEqual(key))
            {
                return e - 1;
            }
        }
    }

    /// <summary>Files <paramref name="key"/> under <paramref name="location"/>; returns the location it had before, or <see cref="None"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public uint Set(ReadOnlySpan<byte> key, int hash, uint location)
    {
        for (int i = Home(hash); ; i = Next(i))
        {
            uint e = _entries[i];
            if (e == 0)
            {
                _entries[i] = location + 1;
                return None;
            }
            if (KeyOf(e - 1).SequenceEqual(key))
            {
                _entries[i] = location + 1;
                return e - 1;
            }
        }
    }

    /// <summary>
    /// Removes the entry that points at <paramref name="location"/> (its key hashing to
    /// <paramref name="hash"/>); nothing when the key has been filed under a later record since.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Remove(int hash, uint location)
    {
        int i = Home(hash);
        while (_entries[i] != location + 1)
        {
            if (_entries[i] == 0)
            {
                return;
            }
            i = Next(i);
        }
        // Backward shift: pull up every later entry of the run that may sit at or before the
        // hole, so no probe sequence is cut by an empty entry.
        int hole = i;
        for (int j = Next(i); _entries[j] != 0; j = Next(j))
        {
            int home = Home(IdKey.Hash(KeyOf(_entries[j] - 1)));
            bool movable = hole <= j ? home <= hole || home > j : home <= hole && home > j;
            if (movable)
            {
                _entries[hole] = _entries[j];
                hole = j;
            }
        }
        _entries[hole] = 0;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private int Home(int hash) => (int)(((ulong)(uint)hash * (uint)_size) >> 32);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private int Next(int i) => i + 1 == _size ? 0 : i + 1;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private ReadOnlySpan<byte> KeyOf(uint location)
    {
        ReadOnlySpan<byte> record = _arena.At(location);
        return record[..IdKey.Length(record)];
    }
}
