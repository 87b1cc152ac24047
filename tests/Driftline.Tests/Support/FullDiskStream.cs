namespace Driftline.Tests.Support;

/// <summary>
/// A file that fails as a full disk does: writes go to the real file until
/// <paramref name="capacity"/> bytes in all, then throw the IOException the runtime raises
/// for ENOSPC ("No space left on device").
/// </summary>
internal sealed class FullDiskStream(Stream inner, long capacity) : Stream
{
    private long _written;

    public const string Message = "No space left on device";

    /// <summary>An opener for <c>CommandContext.CreateOutput</c>: files whose name ends with <paramref name="suffix"/> fill up after <paramref name="capacity"/> bytes.</summary>
    public static Func<string, Stream> For(string suffix, long capacity) => path =>
    {
        var file = Driftline.Output.OutputFile.CreateNew(path);
        return path.EndsWith(suffix, StringComparison.Ordinal) ? new FullDiskStream(file, capacity) : file;
    };

    public override bool CanRead => false;

    public override bool CanSeek => false;

    public override bool CanWrite => true;

    public override long Length => _written;

    public override long Position
    {
        get => _written;
        set => throw new NotSupportedException();
    }

    public override void Write(byte[] buffer, int offset, int count) => Write(buffer.AsSpan(offset, count));

    public override void Write(ReadOnlySpan<byte> buffer)
    {
        if (_written + buffer.Length > capacity)
        {
            throw new IOException(Message);
        }
        inner.Write(buffer);
        _written += buffer.Length;
    }

    public override void Flush() => inner.Flush();

    public override int Read(byte[] buffer, int offset, int count) => throw new NotSupportedException();

    public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

    public override void SetLength(long value) => throw new NotSupportedException();

    protected override void Dispose(bool disposing)
    {
        if (disposing)
        {
            inner.Dispose();
        }
        base.Dispose(disposing);
    }
}
