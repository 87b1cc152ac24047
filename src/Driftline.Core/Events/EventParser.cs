using System.Buffers;
using System.Runtime.CompilerServices;
using System.Text;
using System.Text.Json;
using Driftline.Core.Features;

namespace Driftline.Core.Events;

/// <summary>
/// Parses one UTF-8 JSON record (an event, a label-only record or an external probability)
/// into a reused <see cref="ParsedRecord"/>. Forward-only over <see cref="Utf8JsonReader"/>;
/// feature names and values are hashed straight from the bytes, so a good record allocates
/// only its id string. Not thread-safe: one parser per stage.
/// </summary>
/// <remarks>
/// A record is rejected, with a reason, when it is not JSON, not an object, has no non-empty
/// string <c>id</c>, has <c>features</c> that is not an object, a feature value that is not a
/// string, number, boolean, array of strings or null, a number that is not finite, a
/// <c>label</c> other than exactly 0 or 1, true or false, a <c>p</c> that is not a finite number in
/// [0, 1], a string with an unpaired UTF-16 surrogate escape, an id, key, feature name or
/// value longer than <see cref="MaxTextBytes"/>, or neither features, label nor p. Unknown
/// top-level fields are ignored; a <c>null</c> field counts as absent.
/// </remarks>
internal sealed class EventParser
{
    /// <summary>Most features one event may carry; more is treated as a malformed record.</summary>
    public const int MaxFeatures = 10_000;

    private readonly Dictionary<string, string> _keys = new(StringComparer.Ordinal);
    private readonly Dictionary<string, string>.AlternateLookup<ReadOnlySpan<char>> _keyLookup;
    private byte[] _nameScratch = new byte[256];
    private byte[] _valueScratch = new byte[256];

    /// <summary>
    /// Longest id, key, feature name or feature value, in UTF-8 bytes after escapes are
    /// resolved (<c>Input:MaxTextBytes</c>); a record with a longer one is rejected.
    /// </summary>
    public int MaxTextBytes { get; set; } = Options.InputOptions.DefaultMaxTextBytes;

    /// <summary>Where the text of feature names and values is recorded for later display; null records nothing.</summary>
    public FeatureNames? Names { get; set; }

    private readonly Dictionary<ulong, string> _segments = new();
    private ulong _segmentHash;
    private string? _segmentFeature;

    /// <summary>
    /// The categorical feature whose value names an event's segment (e.g. "zone"), or null for
    /// none. Its text is kept once per distinct value (at most 10,000), so segments cost no
    /// allocation per event.
    /// </summary>
    public string? SegmentFeature
    {
        get => _segmentFeature;
        set
        {
            _segmentFeature = value;
            _segmentHash = value is null ? 0 : FeatureHash.Name(Encoding.UTF8.GetBytes(value));
        }
    }

    /// <summary>The reason given for a string with an unpaired surrogate escape such as <c>"\ud800"</c>.</summary>
    public const string LoneSurrogate = "not valid JSON: a string holds an unpaired UTF-16 surrogate escape (\\uD800 to \\uDFFF must come in pairs, RFC 8259 section 8.2)";

    private Dictionary<string, int>? _classIndex;
    private Dictionary<string, int>.AlternateLookup<ReadOnlySpan<char>> _classLookup;
    private IReadOnlyList<string>? _classes;

    /// <summary>
    /// The class names of a multiclass model (<c>Model:Classes</c>), or null for a binary one.
    /// With classes, a label names a class by its text (a string, or a number as written) and
    /// is read as the class's index; a label naming no class is refused.
    /// </summary>
    public IReadOnlyList<string>? Classes
    {
        get => _classes;
        set
        {
            _classes = value;
            _classIndex = null;
            if (value is not null)
            {
                _classIndex = new Dictionary<string, int>(StringComparer.Ordinal);
                for (int i = 0; i < value.Count; i++)
                {
                    _classIndex.TryAdd(value[i], i);
                }
                _classLookup = _classIndex.GetAlternateLookup<ReadOnlySpan<char>>();
            }
        }
    }

    /// <summary>Creates a parser.</summary>
    public EventParser() => _keyLookup = _keys.GetAlternateLookup<ReadOnlySpan<char>>();

    /// <summary>
    /// Parses <paramref name="utf8"/> into <paramref name="record"/>. Returns false and sets
    /// <paramref name="error"/> to a plain-language reason when the record is rejected; the
    /// record's content is then unspecified.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public bool TryParse(ReadOnlySpan<byte> utf8, ParsedRecord record, out string? error)
    {
        record.Reset();
        if (!System.Text.Unicode.Utf8.IsValid(utf8))
        {
            // The reader checks structure, not the bytes inside strings; JSON text must be UTF-8 (RFC 8259).
            error = "not valid JSON: the text is not valid UTF-8";
            return false;
        }
        try
        {
            error = ParseObject(utf8, record);
        }
        catch (JsonException ex)
        {
            error = "not valid JSON: " + FirstSentence(ex.Message);
        }
        catch (InvalidOperationException)
        {
            // The reader checks an escape's hex digits, not that \uD800-\uDFFF comes in pairs;
            // unescaping one that does not (GetString, CopyString, ValueTextEquals) throws this.
            // Every other call here is guarded by a token-type check, so this is the only cause.
            error = LoneSurrogate;
        }
        return error is null;
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private string? ParseObject(ReadOnlySpan<byte> utf8, ParsedRecord record)
    {
        var reader = new Utf8JsonReader(utf8, new JsonReaderOptions { AllowTrailingCommas = false, CommentHandling = JsonCommentHandling.Disallow });
        if (!reader.Read())
        {
            return "empty record";
        }
        if (reader.TokenType != JsonTokenType.StartObject)
        {
            return "not a JSON object";
        }

        bool sawFeatures = false;
        while (reader.Read() && reader.TokenType == JsonTokenType.PropertyName)
        {
            string? error = null;
            if (reader.ValueTextEquals("id"u8))
            {
                reader.Read();
                if (reader.TokenType != JsonTokenType.String)
                {
                    return "id must be a non-empty string";
                }
                ReadOnlySpan<byte> id = Unescaped(ref reader, ref _valueScratch);
                if (id.Length > MaxTextBytes)
                {
                    return TooLong("id", id.Length);
                }
                record.Id = Encoding.UTF8.GetString(id);
            }
            else if (reader.ValueTextEquals("features"u8))
            {
                reader.Read();
                if (reader.TokenType == JsonTokenType.Null)
                {
                    continue;
                }
                if (reader.TokenType != JsonTokenType.StartObject)
                {
                    return "features must be a JSON object";
                }
                sawFeatures = true;
                error = ReadFeatures(ref reader, record);
            }
            else if (reader.ValueTextEquals("label"u8))
            {
                reader.Read();
                error = ReadLabel(ref reader, record);
            }
            else if (reader.ValueTextEquals("time"u8))
            {
                reader.Read();
                if (reader.TokenType == JsonTokenType.Null)
                {
                    continue;
                }
                if (reader.TokenType != JsonTokenType.String || !reader.TryGetDateTimeOffset(out var time))
                {
                    return "time must be an ISO 8601 timestamp string";
                }
                record.TimeTicks = time.UtcTicks;
            }
            else if (reader.ValueTextEquals("key"u8))
            {
                reader.Read();
                if (reader.TokenType == JsonTokenType.Null)
                {
                    continue;
                }
                if (reader.TokenType != JsonTokenType.String)
                {
                    return "key must be a string";
                }
                record.Key = InternKey(ref reader, out error);
            }
            else if (reader.ValueTextEquals("p"u8))
            {
                reader.Read();
                if (reader.TokenType == JsonTokenType.Null)
                {
                    continue;
                }
                if (_classIndex is not null)
                {
                    error = ReadClassProbabilities(ref reader, record);
                    if (error is not null)
                    {
                        return error;
                    }
                    continue;
                }
                if (reader.TokenType != JsonTokenType.Number || !reader.TryGetDouble(out double p) || !double.IsFinite(p) || p < 0 || p > 1)
                {
                    return "p must be a finite number between 0 and 1";
                }
                record.Probability = p;
            }
            else
            {
                reader.Read();
                reader.Skip();
            }
            if (error is not null)
            {
                return error;
            }
        }
        if (reader.Read())
        {
            return "unexpected content after the JSON object";
        }
        if (record.Id.Length == 0)
        {
            return "id must be a non-empty string";
        }

        if (sawFeatures)
        {
            record.Kind = RecordKind.Event;
        }
        else if (!double.IsNaN(record.Probability) || record.HasClassProbabilities)
        {
            record.Kind = RecordKind.Probability;
        }
        else if (record.HasLabel)
        {
            record.Kind = RecordKind.Label;
        }
        else
        {
            return "record has neither features, a label nor p";
        }
        return null;
    }

    private string? ReadLabel(ref Utf8JsonReader reader, ParsedRecord record)
    {
        if (_classIndex is not null)
        {
            return ReadClassLabel(ref reader, record);
        }
        switch (reader.TokenType)
        {
            case JsonTokenType.Null:
                return null;
            case JsonTokenType.True:
                record.Label = 1;
                return null;
            case JsonTokenType.False:
                record.Label = 0;
                return null;
            case JsonTokenType.Number when !reader.HasValueSequence && LabelNumber.Exact(reader.ValueSpan) is int v and >= 0:
                record.Label = v;
                return null;
            default:
                return "label must be 0, 1, true or false";
        }
    }

    /// <summary>Largest distance of a p object's sum from 1 that is accepted (rounding in the producer's output).</summary>
    public const double ClassSumTolerance = 1e-6;

    // Monitor mode with classes: p is an object naming every class once, each a probability,
    // summing to 1 within ClassSumTolerance.
    private string? ReadClassProbabilities(ref Utf8JsonReader reader, ParsedRecord record)
    {
        var classes = _classes!;
        if (reader.TokenType != JsonTokenType.StartObject)
        {
            return $"p must be an object over the classes of Model:Classes ({string.Join(", ", classes)}), each a probability";
        }
        var p = record.SetClassProbabilities(classes.Count);
        p.Fill(double.NaN);
        while (reader.Read() && reader.TokenType == JsonTokenType.PropertyName)
        {
            string name = reader.GetString()!;
            reader.Read();
            if (!_classLookup.TryGetValue(name.AsSpan(), out int k))
            {
                string shown = name.Length > 40 ? string.Concat(name.AsSpan(0, 40), "…") : name;
                return $"p names '{shown}', which is not a class in Model:Classes ({string.Join(", ", classes)})";
            }
            if (!double.IsNaN(p[k]))
            {
                return $"p names class '{name}' twice";
            }
            if (reader.TokenType != JsonTokenType.Number || !reader.TryGetDouble(out double v) || !double.IsFinite(v) || v < 0 || v > 1)
            {
                return $"p of class '{name}' must be a finite number between 0 and 1";
            }
            p[k] = v;
        }
        double sum = 0;
        for (int k = 0; k < p.Length; k++)
        {
            if (double.IsNaN(p[k]))
            {
                return $"p has no probability for class '{classes[k]}'";
            }
            sum += p[k];
        }
        if (Math.Abs(sum - 1) > ClassSumTolerance)
        {
            return $"p sums to {sum.ToString("0.#########", System.Globalization.CultureInfo.InvariantCulture)} over the classes, not 1 (within {ClassSumTolerance:0e0})";
        }
        return null;
    }

    // A class is named by its text: "late", or a number as written (3 and "3" both name "3").
    private string? ReadClassLabel(ref Utf8JsonReader reader, ParsedRecord record)
    {
        string text;
        switch (reader.TokenType)
        {
            case JsonTokenType.Null:
                return null;
            case JsonTokenType.String:
                text = reader.GetString()!;
                break;
            case JsonTokenType.Number:
                text = Encoding.UTF8.GetString(reader.ValueSpan);
                break;
            case JsonTokenType.True:
                text = "true";
                break;
            case JsonTokenType.False:
                text = "false";
                break;
            default:
                return "label must name one of the classes in Model:Classes";
        }
        if (_classLookup.TryGetValue(text.AsSpan(), out int index))
        {
            record.Label = index;
            return null;
        }
        string shown = text.Length > 40 ? string.Concat(text.AsSpan(0, 40), "…") : text;
        return $"label '{shown}' names no class in Model:Classes ({string.Join(", ", _classes!)})";
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private string? ReadFeatures(ref Utf8JsonReader reader, ParsedRecord record)
    {
        while (reader.Read() && reader.TokenType == JsonTokenType.PropertyName)
        {
            ReadOnlySpan<byte> name = Unescaped(ref reader, ref _nameScratch);
            if (name.Length > MaxTextBytes)
            {
                return TooLong("feature name", name.Length);
            }
            ulong nameHash = FeatureHash.Name(name);
            reader.Read();
            switch (reader.TokenType)
            {
                case JsonTokenType.Null:
                    break;
                case JsonTokenType.String:
                    if (AddCategorical(ref reader, record, name, nameHash) is { } tooLong)
                    {
                        return tooLong;
                    }
                    break;
                case JsonTokenType.Number:
                    if (!reader.TryGetDouble(out double x) || !double.IsFinite(x))
                    {
                        return "feature '" + Encoding.UTF8.GetString(name) + "' is not a finite number";
                    }
                    record.AddFeature(new RawFeature(nameHash, nameHash, x, RawFeatureKind.Numeric));
                    Names?.RecordName(nameHash, name);
                    break;
                case JsonTokenType.True:
                case JsonTokenType.False:
                    record.AddFeature(new RawFeature(nameHash, nameHash, reader.TokenType == JsonTokenType.True ? 1.0 : 0.0, RawFeatureKind.Boolean));
                    Names?.RecordName(nameHash, name);
                    break;
                case JsonTokenType.StartArray:
                    while (reader.Read() && reader.TokenType != JsonTokenType.EndArray)
                    {
                        if (reader.TokenType != JsonTokenType.String)
                        {
                            return "feature '" + Encoding.UTF8.GetString(name) + "' is an array with a value that is not a string";
                        }
                        if (AddCategorical(ref reader, record, name, nameHash) is { } elementTooLong)
                        {
                            return elementTooLong;
                        }
                    }
                    break;
                default:
                    return "feature '" + Encoding.UTF8.GetString(name) + "' must be a string, number, boolean, array of strings or null";
            }
            if (record.FeatureCount > MaxFeatures)
            {
                return $"more than {MaxFeatures} features";
            }
        }
        return null;
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private string? AddCategorical(ref Utf8JsonReader reader, ParsedRecord record, scoped ReadOnlySpan<byte> name, ulong nameHash)
    {
        ReadOnlySpan<byte> value = Unescaped(ref reader, ref _valueScratch);
        if (value.Length > MaxTextBytes)
        {
            return TooLong("the value of feature '" + Encoding.UTF8.GetString(name) + "'", value.Length);
        }
        ulong hash = FeatureHash.Value(nameHash, value);
        record.AddFeature(new RawFeature(nameHash, hash, 1.0, RawFeatureKind.Categorical));
        Names?.RecordValue(hash, name, value);
        if (nameHash == _segmentHash && _segmentHash != 0 && record.Segment is null)
        {
            if (!_segments.TryGetValue(hash, out var segment))
            {
                segment = Encoding.UTF8.GetString(value);
                if (_segments.Count < 10_000)
                {
                    _segments[hash] = segment;
                }
            }
            record.Segment = segment;
        }
        return null;
    }

    // The token's bytes with JSON escapes resolved; points into the input when there are none.
    private static ReadOnlySpan<byte> Unescaped(ref Utf8JsonReader reader, ref byte[] scratch)
    {
        if (!reader.ValueIsEscaped && !reader.HasValueSequence)
        {
            return reader.ValueSpan;
        }
        int needed = reader.HasValueSequence ? checked((int)reader.ValueSequence.Length) : reader.ValueSpan.Length;
        if (scratch.Length < needed)
        {
            scratch = new byte[Math.Max(needed, scratch.Length * 2)];
        }
        int written = reader.CopyString(scratch);
        return scratch.AsSpan(0, written);
    }

    private string? InternKey(ref Utf8JsonReader reader, out string? error)
    {
        ReadOnlySpan<byte> bytes = Unescaped(ref reader, ref _valueScratch);
        error = null;
        if (bytes.Length > MaxTextBytes)
        {
            error = TooLong("key", bytes.Length);
            return null;
        }
        if (bytes.Length > 256)
        {
            return Encoding.UTF8.GetString(bytes);
        }
        Span<char> chars = stackalloc char[256];
        int n = Encoding.UTF8.GetChars(bytes, chars);
        if (_keyLookup.TryGetValue(chars[..n], out var key))
        {
            return key;
        }
        key = new string(chars[..n]);
        if (_keys.Count < 100_000)
        {
            _keys[key] = key;
        }
        return key;
    }

    private string TooLong(string what, int bytes) =>
        string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{what} is {bytes:N0} bytes, more than Input:MaxTextBytes ({MaxTextBytes:N0})");

    private static string FirstSentence(string message)
    {
        int cut = message.IndexOf(". ", StringComparison.Ordinal);
        return cut > 0 ? message[..cut] : message.TrimEnd('.');
    }
}
