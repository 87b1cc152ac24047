using Driftline.Core.Events;

namespace Driftline.Pipeline;

/// <summary>
/// A run of input lines in one buffer, handed from the reader stage to the scoring stage and
/// then back to the pool, so reading allocates nothing once the pool is warm.
/// </summary>
internal sealed class LineBatch
{
    private byte[] _data = new byte[1 << 20];
    private int[] _starts = new int[8192];
    private int[] _lengths = new int[8192];
    private ParsedRecord[] _records = [];
    private string?[] _errors = [];
    private bool[] _blank = [];
    private string?[] _refused = new string?[8192];

    /// <summary>Lines in the batch.</summary>
    public int Count { get; private set; }

    /// <summary>Bytes used in the buffer.</summary>
    public int Bytes { get; private set; }

    /// <summary>1-based number of the first line in the source.</summary>
    public long FirstLine { get; set; }

    /// <summary>Most lines a batch takes before it is handed on.</summary>
    public const int MaxLines = 4096;

    /// <summary>Buffer size a batch aims for before it is handed on.</summary>
    public const int TargetBytes = 1 << 20;

    /// <summary>The bytes of line <paramref name="i"/>, without its line break.</summary>
    public ReadOnlySpan<byte> Line(int i) => _data.AsSpan(_starts[i], _lengths[i]);

    /// <summary>The parsed form of line <paramref name="i"/>, filled by the reading stage's parse (reused from batch to batch).</summary>
    public ParsedRecord Record(int i) => _records[i];

    /// <summary>Why line <paramref name="i"/> was rejected by the parser, or null when it parsed (or is blank).</summary>
    public string? Error(int i) => _errors[i];

    /// <summary>True when line <paramref name="i"/> holds nothing but blanks (skipped, but counted for line numbers); set by <see cref="Parse"/>.</summary>
    /// <remarks>
    /// Kept from the parse, not asked of the bytes again: the scoring stage, on the other core,
    /// then never reads a line it does not reject (the second test was 1% of a wide replay's
    /// samples, most of it the line's first bytes crossing between the cores).
    /// </remarks>
    public bool IsBlank(int i) => _blank[i];

    private bool BlankText(int i)
    {
        if (_refused[i] is not null)
        {
            return false;
        }
        // A line that starts with anything but a blank is not blank, so the trim runs only for
        // lines that start with one.
        var line = Line(i);
        return line.IsEmpty || (line[0] is (byte)' ' or (byte)'\t' && line.Trim(" \t"u8).IsEmpty);
    }

    /// <summary>Parses every line with <paramref name="parser"/> into the batch's records.</summary>
    public void Parse(EventParser parser)
    {
        if (_records.Length < Count)
        {
            int old = _records.Length;
            Array.Resize(ref _records, Math.Max(Count, _starts.Length));
            Array.Resize(ref _errors, _records.Length);
            Array.Resize(ref _blank, _records.Length);
            for (int i = old; i < _records.Length; i++)
            {
                _records[i] = new ParsedRecord();
            }
        }
        for (int i = 0; i < Count; i++)
        {
            bool blank = BlankText(i);
            _blank[i] = blank;
            _errors[i] = _refused[i] ?? (blank || parser.TryParse(Line(i), _records[i], out var error) ? null : error);
        }
    }

    /// <summary>True when the batch should be handed on.</summary>
    public bool IsFull => Count >= MaxLines || Bytes >= TargetBytes;

    /// <summary>Empties the batch, keeping its buffers.</summary>
    public void Clear()
    {
        Count = 0;
        Bytes = 0;
        SkippedBytes = 0;
    }

    /// <summary>Source bytes of refused lines that the batch does not hold (all but their prefixes).</summary>
    public long SkippedBytes { get; private set; }

    /// <summary>
    /// Appends a line refused before parsing (e.g. over the size limit), kept as
    /// <paramref name="prefix"/> with <paramref name="reason"/>; <paramref name="lineBytes"/> is its full length.
    /// </summary>
    public void AddRejected(ReadOnlySpan<byte> prefix, string reason, long lineBytes)
    {
        Add(prefix);
        SkippedBytes += lineBytes - prefix.Length;
        _refused[Count - 1] = reason;
    }

    /// <summary>Appends one line.</summary>
    public void Add(ReadOnlySpan<byte> line)
    {
        if (Bytes + line.Length > _data.Length)
        {
            Array.Resize(ref _data, Math.Max(_data.Length * 2, Bytes + line.Length));
        }
        if (Count == _starts.Length)
        {
            Array.Resize(ref _starts, Count * 2);
            Array.Resize(ref _lengths, Count * 2);
            Array.Resize(ref _refused, Count * 2);
        }
        line.CopyTo(_data.AsSpan(Bytes));
        _starts[Count] = Bytes;
        _lengths[Count] = line.Length;
        _refused[Count] = null;
        Bytes += line.Length;
        Count++;
    }
}
