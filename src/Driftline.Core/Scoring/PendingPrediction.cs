namespace Driftline.Core.Scoring;

/// <summary>
/// A prediction waiting for its label: what was emitted and the features it was made from,
/// so the late label can grade the emitted probability and train on the same inputs.
/// </summary>
internal sealed class PendingPrediction
{
    private int[] _slots = new int[16];
    private double[] _values = new double[16];

    /// <summary>The event id, or null for a free slot.</summary>
    public string? Id { get; set; }

    /// <summary>The id's hash in the store's index (<see cref="PendingIndex.Hash"/>).</summary>
    public int IdHash { get; set; }

    /// <summary>Index of the model that scored it.</summary>
    public int Model { get; set; }

    /// <summary>Event time as UTC ticks (or no time).</summary>
    public long TimeTicks { get; set; }

    /// <summary>The probability emitted.</summary>
    public double P { get; set; }

    /// <summary>The class-prior baseline's probability at the same moment.</summary>
    public double PriorP { get; set; }

    /// <summary>The event's segment (see <c>Monitor:SegmentBy</c>), or null.</summary>
    public string? Segment { get; set; }

    /// <summary>True once a label has joined it (kept to recognise duplicates).</summary>
    public bool Labelled { get; set; }

    /// <summary>Number of stored features.</summary>
    public int Count { get; private set; }

    /// <summary>Stored slots.</summary>
    public ReadOnlySpan<int> Slots => _slots.AsSpan(0, Count);

    /// <summary>Stored values.</summary>
    public ReadOnlySpan<double> Values => _values.AsSpan(0, Count);

    /// <summary>Copies the features in, reusing the buffers.</summary>
    public void SetFeatures(ReadOnlySpan<int> slots, ReadOnlySpan<double> values)
    {
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
