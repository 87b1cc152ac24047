namespace Driftline.Core.Scoring;

/// <summary>
/// A waiting prediction as read back from the store: what was emitted and the features it was
/// made from, so the late label can grade the emitted probability and train on the same inputs.
/// The store keeps predictions as encoded records (<see cref="PendingRecord"/>); a joined one is
/// decoded into the store's one reusable instance, valid until the store's next call.
/// </summary>
internal sealed class PendingPrediction
{
    private double[] _classP = [];
    private double[] _classPriorP = [];
    private int _classes;
    private double[] _servedClassP = [];
    private int _servedClasses;
    private int[] _slots = [];
    private double[] _values = [];

    /// <summary>The event id (decoded only for snapshots; null on a joined prediction).</summary>
    public string? Id { get; set; }

    /// <summary>Index of the model that scored it.</summary>
    public int Model { get; set; }

    /// <summary>Event time as UTC ticks (or no time).</summary>
    public long TimeTicks { get; set; }

    /// <summary>The probability emitted (binary; NaN for a multiclass one).</summary>
    public double P { get; set; }

    /// <summary>The class-prior baseline's probability at the same moment (binary; NaN for a multiclass one).</summary>
    public double PriorP { get; set; }

    /// <summary>With recalibration on: the probability served for the event (binary); NaN otherwise.</summary>
    public double Served { get; set; } = double.NaN;

    /// <summary>Multiclass with recalibration on: the class probabilities served (empty otherwise).</summary>
    public ReadOnlySpan<double> ServedClassP => _servedClassP.AsSpan(0, _servedClasses);

    /// <summary>Multiclass: the class probabilities emitted (empty for binary).</summary>
    public ReadOnlySpan<double> ClassP => _classP.AsSpan(0, _classes);

    /// <summary>Multiclass: the class prior's probabilities at the same moment (empty for binary).</summary>
    public ReadOnlySpan<double> ClassPriorP => _classPriorP.AsSpan(0, _classes);

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

    /// <summary>Room for <paramref name="classes"/> class probabilities (0 for binary), reusing the buffers.</summary>
    public void ClassBuffers(int classes, out Span<double> p, out Span<double> priorP)
    {
        if (_classP.Length < classes)
        {
            _classP = new double[classes];
            _classPriorP = new double[classes];
        }
        _classes = classes;
        p = _classP.AsSpan(0, classes);
        priorP = _classPriorP.AsSpan(0, classes);
    }

    /// <summary>Room for <paramref name="classes"/> served class probabilities (0 for none), reusing the buffer.</summary>
    public Span<double> ServedBuffer(int classes)
    {
        if (_servedClassP.Length < classes)
        {
            _servedClassP = new double[classes];
        }
        _servedClasses = classes;
        return _servedClassP.AsSpan(0, classes);
    }

    /// <summary>Room for <paramref name="count"/> features, reusing the buffers.</summary>
    public void FeatureBuffers(int count, out Span<int> slots, out Span<double> values)
    {
        if (_slots.Length < count)
        {
            _slots = new int[Math.Max(count, _slots.Length * 2)];
            _values = new double[_slots.Length];
        }
        Count = count;
        slots = _slots.AsSpan(0, count);
        values = _values.AsSpan(0, count);
    }
}
