using System.Numerics;
using System.Runtime.CompilerServices;

namespace Driftline.Core.Learning;

/// <summary>
/// Where each written weight slot keeps its statistics: an open-addressing map from slot to
/// a position in the learner's dense arrays, positions handed out 0, 1, 2, … in the order
/// slots are first written. A model writes a few hundred of its 2^hash-bits slots, so its
/// statistics take kilobytes instead of megabytes and stay in cache; with models keyed by a
/// field, dense arrays cost every key megabytes of zeroed memory before its first event.
/// </summary>
/// <remarks>
/// Linear probing (common practice) over 8-byte entries, (slot + 1) in the high half and the
/// position in the low half, 0 for empty; the table doubles when it is half full, and
/// nothing is ever removed. Slots are spread over the table by Fibonacci hashing (Knuth,
/// TAOCP vol. 3, §6.4), because hashed feature slots need not be spread in their low bits.
/// </remarks>
internal sealed class SlotTable
{
    private const int InitialCapacity = 64;

    private ulong[] _entries = new ulong[InitialCapacity];
    private int _shift = 64 - BitOperations.Log2(InitialCapacity);
    private int[] _slots = new int[InitialCapacity / 2];

    /// <summary>Slots written so far; their positions are 0 to Count − 1.</summary>
    public int Count { get; private set; }

    /// <summary>How many positions the learner's dense arrays must hold now (at least <see cref="Count"/>).</summary>
    public int Capacity => _slots.Length;

    /// <summary>The slot at <paramref name="position"/>.</summary>
    public int SlotAt(int position) => _slots[position];

    /// <summary>The position of <paramref name="slot"/>, or −1 when it was never written.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public int Find(int slot) => Probe(slot, out _);

    /// <summary>
    /// The position of <paramref name="slot"/>, adding it at position <see cref="Count"/> when it is
    /// new; <paramref name="grew"/> tells the caller that <see cref="Capacity"/> went up.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public int FindOrAdd(int slot, out bool grew)
    {
        int position = Probe(slot, out int empty);
        if (position >= 0)
        {
            grew = false;
            return position;
        }
        return Add(slot, empty, out grew);
    }

    /// <summary>Forgets every slot.</summary>
    public void Clear()
    {
        Array.Clear(_entries);
        Count = 0;
    }

    private int Add(int slot, int at, out bool grew)
    {
        int position = Count++;
        _entries[at] = ((ulong)(uint)(slot + 1) << 32) | (uint)position;
        grew = position == _slots.Length;
        if (grew)
        {
            Array.Resize(ref _slots, _slots.Length * 2);
            Rehash(_entries.Length * 2);
        }
        _slots[position] = slot;
        return position;
    }

    private void Rehash(int capacity)
    {
        var old = _entries;
        _entries = new ulong[capacity];
        _shift = 64 - BitOperations.Log2((uint)capacity);
        int mask = capacity - 1;
        foreach (ulong entry in old)
        {
            if (entry != 0)
            {
                int i = Home((int)(entry >> 32) - 1);
                while (_entries[i] != 0)
                {
                    i = (i + 1) & mask;
                }
                _entries[i] = entry;
            }
        }
    }

    /// <summary>The position of <paramref name="slot"/>, or −1 with <paramref name="empty"/> the entry where it would go.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private int Probe(int slot, out int empty)
    {
        var entries = _entries;
        int mask = entries.Length - 1;
        ulong key = (ulong)(uint)(slot + 1) << 32;
        for (int i = Home(slot); ; i = (i + 1) & mask)
        {
            ulong entry = entries[i];
            if ((entry & 0xFFFF_FFFF_0000_0000UL) == key)
            {
                empty = -1;
                return (int)(uint)entry;
            }
            if (entry == 0)
            {
                empty = i;
                return -1;
            }
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private int Home(int slot) => (int)(((ulong)(uint)slot * 0x9E37_79B9_7F4A_7C15UL) >> _shift);
}
