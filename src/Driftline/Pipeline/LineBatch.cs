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

    /// <summary>True when the batch should be handed on.</summary>
    public bool IsFull => Count >= MaxLines || Bytes >= TargetBytes;

    /// <summary>Empties the batch, keeping its buffers.</summary>
    public void Clear()
    {
        Count = 0;
        Bytes = 0;
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
        }
        line.CopyTo(_data.AsSpan(Bytes));
        _starts[Count] = Bytes;
        _lengths[Count] = line.Length;
        Bytes += line.Length;
        Count++;
    }
}
