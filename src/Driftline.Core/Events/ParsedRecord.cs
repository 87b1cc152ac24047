namespace Driftline.Core.Events;

/// <summary>
/// One record parsed from the wire, reused from record to record so the hot path does not
/// allocate (only the id string is new per record).
/// </summary>
internal sealed class ParsedRecord
{
    private RawFeature[] _features = new RawFeature[16];

    /// <summary>What the record asks for.</summary>
    public RecordKind Kind { get; set; }

    /// <summary>The record's id: never empty on a parsed record.</summary>
    public string Id { get; set; } = "";

    /// <summary>The model key, or null for the default model.</summary>
    public string? Key { get; set; }

    /// <summary>The value of the parser's segment feature, or null when it has none.</summary>
    public string? Segment { get; set; }

    /// <summary>Event time as UTC ticks, or <see cref="NoTime"/> when the record has none.</summary>
    public long TimeTicks { get; set; } = NoTime;

    /// <summary>The label: 0 or 1 (binary), the class index (multiclass), or -1 when absent.</summary>
    public int Label { get; set; } = -1;

    /// <summary>An external model's probability (monitor mode), or NaN when absent.</summary>
    public double Probability { get; set; } = double.NaN;

    private double[] _classProbabilities = [];

    /// <summary>Multiclass monitor mode: an external model's class probabilities, in the order of the classes; empty when absent.</summary>
    public ReadOnlySpan<double> ClassProbabilities => HasClassProbabilities ? _classProbabilities : [];

    /// <summary>True when the record carries a <c>p</c> object over the classes.</summary>
    public bool HasClassProbabilities { get; private set; }

    /// <summary>The buffer for <paramref name="classes"/> class probabilities (reused), marked present.</summary>
    public Span<double> SetClassProbabilities(int classes)
    {
        if (_classProbabilities.Length != classes)
        {
            _classProbabilities = new double[classes];
        }
        HasClassProbabilities = true;
        return _classProbabilities;
    }

    /// <summary>Number of features in <see cref="Features"/>.</summary>
    public int FeatureCount { get; private set; }

    /// <summary>The features read, in input order.</summary>
    public ReadOnlySpan<RawFeature> Features => _features.AsSpan(0, FeatureCount);

    /// <summary>True when a label is present.</summary>
    public bool HasLabel => Label >= 0;

    /// <summary>True when the record carries an event time.</summary>
    public bool HasTime => TimeTicks != NoTime;

    /// <summary>Marker for "no event time".</summary>
    public const long NoTime = long.MinValue;

    /// <summary>Clears the record for the next parse, keeping its buffers.</summary>
    public void Reset()
    {
        Kind = RecordKind.Event;
        Id = "";
        Key = null;
        Segment = null;
        TimeTicks = NoTime;
        Label = -1;
        Probability = double.NaN;
        HasClassProbabilities = false;
        FeatureCount = 0;
    }

    /// <summary>Appends a feature, growing the buffer when needed.</summary>
    public void AddFeature(in RawFeature feature)
    {
        if (FeatureCount == _features.Length)
        {
            Array.Resize(ref _features, _features.Length * 2);
        }
        _features[FeatureCount++] = feature;
    }

    /// <summary>Copies this record's content into <paramref name="target"/> (used to hand a record across threads).</summary>
    public void CopyTo(ParsedRecord target)
    {
        target.Reset();
        target.Kind = Kind;
        target.Id = Id;
        target.Key = Key;
        target.Segment = Segment;
        target.TimeTicks = TimeTicks;
        target.Label = Label;
        target.Probability = Probability;
        if (HasClassProbabilities)
        {
            _classProbabilities.CopyTo(target.SetClassProbabilities(_classProbabilities.Length));
        }
        foreach (ref readonly var f in Features)
        {
            target.AddFeature(f);
        }
    }
}
