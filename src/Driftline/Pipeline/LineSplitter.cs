namespace Driftline.Pipeline;

/// <summary>
/// Splits a byte stream into lines (LF, with an optional CR before it) with a bounded buffer:
/// a line longer than the limit is not held whole but skipped to its line break, keeping only
/// a short prefix for its dead letter. A UTF-8 byte order mark at the very start is skipped
/// (RFC 8259 section 8.1 lets a parser ignore one). The caller reads into <see cref="Space"/>,
/// reports the count with <see cref="Advance"/>, then takes lines with <see cref="Next"/>
/// until it asks for more. Memory is at most the limit plus two bytes, or 1 MiB when larger.
/// </summary>
internal sealed class LineSplitter
{
    /// <summary>Bytes of an oversized line kept for its dead letter (the dead letter cuts its text to fewer characters).</summary>
    public const int PrefixBytes = DeadLetter.MaxRawChars * 4;

    private const int InitialBytes = 1 << 20;

    private readonly int _maxLineBytes;
    private readonly int _capacity;
    private byte[] _buffer;
    private int _start;
    private int _end;
    private bool _atStart = true;
    private bool _ended;
    private bool _skipping;
    private long _skipped;
    private bool _skippedEndsInCr;
    private readonly byte[] _prefix = new byte[PrefixBytes];
    private int _prefixLength;

    /// <summary>Creates a splitter for lines of at most <paramref name="maxLineBytes"/> bytes (line break not counted).</summary>
    public LineSplitter(int maxLineBytes)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(maxLineBytes, 1);
        _maxLineBytes = maxLineBytes;
        // Room for a line at the limit, its CR and LF; at least a buffer that reads efficiently.
        _capacity = Math.Max(InitialBytes, maxLineBytes + 2);
        _buffer = new byte[Math.Min(InitialBytes, _capacity)];
    }

    /// <summary>Size of the buffer now (it grows to the limit plus two bytes at most, or 1 MiB).</summary>
    public int BufferBytes => _buffer.Length;

    /// <summary>The limit, as given.</summary>
    public int MaxLineBytes => _maxLineBytes;

    /// <summary>Where to read the next bytes into (never empty before the end).</summary>
    public Memory<byte> Space()
    {
        if (_start > 0)
        {
            _buffer.AsSpan(_start, _end - _start).CopyTo(_buffer);
            _end -= _start;
            _start = 0;
        }
        if (_end == _buffer.Length)
        {
            // Pending bytes never exceed the limit plus one (past it, skipping starts), so the
            // buffer reaches its capacity at most.
            Array.Resize(ref _buffer, (int)Math.Min(_capacity, _buffer.Length * 2L));
        }
        return _buffer.AsMemory(_end);
    }

    /// <summary>Takes <paramref name="read"/> bytes written into <see cref="Space"/>; 0 means the stream has ended.</summary>
    public void Advance(int read)
    {
        if (read == 0)
        {
            _ended = true;
        }
        _end += read;
    }

    /// <summary>
    /// The next line: <see cref="LineKind.Line"/> with its bytes (without the line break),
    /// <see cref="LineKind.Oversized"/> with its prefix and full length in
    /// <paramref name="oversizedBytes"/>, <see cref="LineKind.NeedMore"/> when the caller must
    /// read, or <see cref="LineKind.End"/>. The span is valid until the next call.
    /// </summary>
    public LineKind Next(out ReadOnlySpan<byte> line, out long oversizedBytes)
    {
        line = default;
        oversizedBytes = 0;
        if (_atStart)
        {
            if (_end - _start < 3 && !_ended)
            {
                return LineKind.NeedMore;
            }
            _atStart = false;
            if (_buffer.AsSpan(_start, _end - _start).StartsWith("\uFEFF"u8))
            {
                _start += 3;
            }
        }
        var pending = _buffer.AsSpan(_start, _end - _start);
        int newline = pending.IndexOf((byte)'\n');
        if (_skipping)
        {
            if (newline < 0 && !_ended)
            {
                KeepPrefix(pending);
                _skipped += pending.Length;
                _skippedEndsInCr = !pending.IsEmpty ? pending[^1] == (byte)'\r' : _skippedEndsInCr;
                _start = _end;
                return LineKind.NeedMore;
            }
            int taken = newline < 0 ? pending.Length : newline;
            KeepPrefix(pending[..taken]);
            _skipped += taken;
            _start += newline < 0 ? taken : taken + 1;
            _skipping = false;
            // The length reported, like a line's, leaves out a CR before the LF.
            if (taken > 0 ? pending[taken - 1] == (byte)'\r' : _skippedEndsInCr)
            {
                _skipped--;
            }
            line = _prefix.AsSpan(0, (int)Math.Min(_prefixLength, _skipped));
            oversizedBytes = _skipped;
            return LineKind.Oversized;
        }
        if (newline < 0)
        {
            if (pending.Length > _maxLineBytes + 1)
            {
                // Longer than any allowed line even with a CR: keep a prefix and skip the rest.
                _prefixLength = 0;
                KeepPrefix(pending);
                _skipped = pending.Length;
                _skippedEndsInCr = pending[^1] == (byte)'\r';
                _skipping = true;
                _start = _end;
                return _ended ? Next(out line, out oversizedBytes) : LineKind.NeedMore;
            }
            if (!_ended)
            {
                return LineKind.NeedMore;
            }
            if (pending.IsEmpty)
            {
                return LineKind.End;
            }
            newline = pending.Length;
            _start = _end;
        }
        else
        {
            _start += newline + 1;
        }
        line = pending[..newline];
        if (!line.IsEmpty && line[^1] == (byte)'\r')
        {
            line = line[..^1];
        }
        if (line.Length > _maxLineBytes)
        {
            oversizedBytes = line.Length;
            line = line[..Math.Min(PrefixBytes, line.Length)];
            return LineKind.Oversized;
        }
        return LineKind.Line;
    }

    // The first PrefixBytes of the line being skipped, for its dead letter.
    private void KeepPrefix(ReadOnlySpan<byte> bytes)
    {
        int n = Math.Min(PrefixBytes - _prefixLength, bytes.Length);
        bytes[..n].CopyTo(_prefix.AsSpan(_prefixLength));
        _prefixLength += n;
    }

    /// <summary>The dead-letter reason for an oversized line of <paramref name="bytes"/> bytes.</summary>
    public string OversizedReason(long bytes) =>
        string.Create(System.Globalization.CultureInfo.InvariantCulture, $"line of {bytes:N0} bytes exceeds Input:MaxLineBytes ({_maxLineBytes:N0})");
}
