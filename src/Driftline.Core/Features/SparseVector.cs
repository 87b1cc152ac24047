namespace Driftline.Core.Features;

/// <summary>
/// A reusable sparse feature vector: weight slots and signed, scaled values. Slots may repeat
/// (hash collisions inside one event); both the margin and the gradient simply add them.
/// </summary>
internal sealed class SparseVector
{
    private int[] _slots;
    private double[] _values;

    /// <summary>Creates an empty vector with room for <paramref name="capacity"/> entries.</summary>
    public SparseVector(int capacity = 64)
    {
        _slots = new int[capacity];
        _values = new double[capacity];
    }

    /// <summary>Number of entries.</summary>
    public int Count { get; private set; }

    /// <summary>Weight slots of the entries.</summary>
    public ReadOnlySpan<int> Slots => _slots.AsSpan(0, Count);

    /// <summary>Signed, scaled values of the entries.</summary>
    public ReadOnlySpan<double> Values => _values.AsSpan(0, Count);

    /// <summary>Empties the vector, keeping its buffers.</summary>
    public void Clear() => Count = 0;

    /// <summary>Appends an entry, growing the buffers when needed.</summary>
    public void Add(int slot, double value)
    {
        if (Count == _slots.Length)
        {
            Array.Resize(ref _slots, Count * 2);
            Array.Resize(ref _values, Count * 2);
        }
        _slots[Count] = slot;
        _values[Count] = value;
        Count++;
    }

    /// <summary>Replaces the content with <paramref name="slots"/> and <paramref name="values"/>.</summary>
    public void CopyFrom(ReadOnlySpan<int> slots, ReadOnlySpan<double> values)
    {
        System.Diagnostics.Debug.Assert(slots.Length == values.Length, "one value per slot");
        if (_slots.Length < slots.Length)
        {
            _slots = new int[Math.Max(slots.Length, _slots.Length * 2)];
            _values = new double[_slots.Length];
        }
        slots.CopyTo(_slots);
        values.CopyTo(_values);
        Count = slots.Length;
    }
}
