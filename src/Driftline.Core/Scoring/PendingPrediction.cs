namespace Driftline.Core.Scoring;

/// <summary>
/// A prediction waiting for its label: what was emitted and the features it was made from,
/// so the late label can grade the emitted probability and train on the same inputs.
/// </summary>
internal sealed class PendingPrediction
{
    // Features live in the store's shared arrays, Stride entries per slot, so a couple of
    // hundred thousand waiting predictions are two large arrays rather than as many pairs of
    // small ones for the collector to copy from generation to generation; an event with more
    // features than the stride keeps them in arrays of its own.
    private readonly int[] _sharedSlots;
    private readonly double[] _sharedValues;
    private readonly int _offset;
    private readonly int _stride;
    private int[] _ownSlots = [];
    private double[] _ownValues = [];

    /// <summary>A free-standing entry whose features are always held in its own arrays.</summary>
    public PendingPrediction()
        : this([], [], 0, 0)
    {
    }

    /// <summary>An entry whose first <paramref name="stride"/> features go to the shared arrays at <paramref name="offset"/>.</summary>
    public PendingPrediction(int[] sharedSlots, double[] sharedValues, int offset, int stride)
    {
        _sharedSlots = sharedSlots;
        _sharedValues = sharedValues;
        _offset = offset;
        _stride = stride;
    }

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

    /// <summary>With recalibration on: the probability served for the event (binary); NaN otherwise.</summary>
    public double Served { get; set; } = double.NaN;

    /// <summary>Multiclass with recalibration on: the class probabilities served (empty otherwise).</summary>
    public ReadOnlySpan<double> ServedClassP => _servedClassP;

    private double[] _servedClassP = [];

    /// <summary>Multiclass with recalibration on: keeps the served class probabilities (the array is reused).</summary>
    public void SetServed(ReadOnlySpan<double> served)
    {
        if (_servedClassP.Length != served.Length)
        {
            _servedClassP = new double[served.Length];
        }
        served.CopyTo(_servedClassP);
    }

    /// <summary>Multiclass: the class probabilities emitted (empty for binary).</summary>
    public ReadOnlySpan<double> ClassP => _classP;

    /// <summary>Multiclass: the class prior's probabilities at the same moment (empty for binary).</summary>
    public ReadOnlySpan<double> ClassPriorP => _classPriorP;

    private double[] _classP = [];
    private double[] _classPriorP = [];

    /// <summary>
    /// Keeps the model's and the prior's outputs: one value each for a binary model (in
    /// <see cref="P"/> and <see cref="PriorP"/>), K for a multiclass one (the entry's arrays are
    /// reused from one prediction to the next).
    /// </summary>
    public void SetProbabilities(ReadOnlySpan<double> p, ReadOnlySpan<double> priorP)
    {
        if (p.Length == 1)
        {
            P = p[0];
            PriorP = priorP[0];
            return;
        }
        if (_classP.Length != p.Length)
        {
            _classP = new double[p.Length];
            _classPriorP = new double[p.Length];
        }
        p.CopyTo(_classP);
        priorP.CopyTo(_classPriorP);
        P = double.NaN;
        PriorP = double.NaN;
    }

    /// <summary>The event's segment (see <c>Monitor:SegmentBy</c>), or null.</summary>
    public string? Segment { get; set; }

    /// <summary>True once a label has joined it (kept to recognise duplicates).</summary>
    public bool Labelled { get; set; }

    /// <summary>Number of stored features.</summary>
    public int Count { get; private set; }

    /// <summary>Stored slots.</summary>
    public ReadOnlySpan<int> Slots => Count <= _stride ? _sharedSlots.AsSpan(_offset, Count) : _ownSlots.AsSpan(0, Count);

    /// <summary>Stored values.</summary>
    public ReadOnlySpan<double> Values => Count <= _stride ? _sharedValues.AsSpan(_offset, Count) : _ownValues.AsSpan(0, Count);

    /// <summary>Copies the features in, reusing the buffers.</summary>
    public void SetFeatures(ReadOnlySpan<int> slots, ReadOnlySpan<double> values)
    {
        System.Diagnostics.Debug.Assert(slots.Length == values.Length, "one value per slot");
        Count = slots.Length;
        if (Count <= _stride)
        {
            slots.CopyTo(_sharedSlots.AsSpan(_offset, _stride));
            values.CopyTo(_sharedValues.AsSpan(_offset, _stride));
            return;
        }
        if (_ownSlots.Length < Count)
        {
            _ownSlots = new int[Math.Max(Count, _ownSlots.Length * 2)];
            _ownValues = new double[_ownSlots.Length];
        }
        slots.CopyTo(_ownSlots);
        values.CopyTo(_ownValues);
    }
}
