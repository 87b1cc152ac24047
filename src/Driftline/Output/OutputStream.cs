namespace Driftline.Output;

/// <summary>
/// An output file's stream that reports every failure of the file itself as an
/// <see cref="OutputException"/> naming the file: a full disk or no permission (IOException,
/// UnauthorizedAccessException), and a file-size limit reached (EFBIG, which the runtime
/// raises as ArgumentOutOfRangeException). Only the inner stream's calls are translated, so
/// a mistake in the code that formats the content still surfaces as what it is.
/// </summary>
internal sealed class OutputStream(Stream inner, string path) : Stream
{
    /// <summary>The file the user knows (not its temporary name).</summary>
    public string Path => path;

    /// <inheritdoc />
    public override bool CanRead => false;

    /// <inheritdoc />
    public override bool CanSeek => false;

    /// <inheritdoc />
    public override bool CanWrite => true;

    /// <inheritdoc />
    public override long Length => throw new NotSupportedException();

    /// <inheritdoc />
    public override long Position
    {
        get => throw new NotSupportedException();
        set => throw new NotSupportedException();
    }

    /// <inheritdoc />
    public override void Write(byte[] buffer, int offset, int count) => Write(buffer.AsSpan(offset, count));

    /// <inheritdoc />
    public override void Write(ReadOnlySpan<byte> buffer)
    {
        try
        {
            inner.Write(buffer);
        }
        catch (Exception ex) when (IsFileFailure(ex))
        {
            throw new OutputException(path, ex);
        }
    }

    /// <inheritdoc />
    public override void WriteByte(byte value) => Write([value]);

    /// <inheritdoc />
    public override Task WriteAsync(byte[] buffer, int offset, int count, CancellationToken cancellationToken)
    {
        Write(buffer.AsSpan(offset, count));
        return Task.CompletedTask;
    }

    /// <inheritdoc />
    public override ValueTask WriteAsync(ReadOnlyMemory<byte> buffer, CancellationToken cancellationToken = default)
    {
        Write(buffer.Span);
        return ValueTask.CompletedTask;
    }

    /// <inheritdoc />
    public override void Flush() => Guard(inner.Flush);

    /// <inheritdoc />
    public override Task FlushAsync(CancellationToken cancellationToken)
    {
        Flush();
        return Task.CompletedTask;
    }

    /// <summary>Flushes to the operating system and, for a real file, to the disk.</summary>
    public void FlushToDisk() => Guard(() =>
    {
        inner.Flush();
        if (inner is FileStream file)
        {
            file.Flush(flushToDisk: true);
        }
    });

    /// <inheritdoc />
    public override int Read(byte[] buffer, int offset, int count) => throw new NotSupportedException();

    /// <inheritdoc />
    public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

    /// <inheritdoc />
    public override void SetLength(long value) => throw new NotSupportedException();

    /// <inheritdoc />
    protected override void Dispose(bool disposing)
    {
        if (disposing)
        {
            // Closing writes what is still buffered, so it can fail as a write does.
            Guard(inner.Dispose);
        }
        base.Dispose(disposing);
    }

    private static bool IsFileFailure(Exception ex) =>
        ex is (IOException or UnauthorizedAccessException or ArgumentOutOfRangeException) and not OutputException;

    private void Guard(Action action)
    {
        try
        {
            action();
        }
        catch (Exception ex) when (IsFileFailure(ex))
        {
            throw new OutputException(path, ex);
        }
    }
}
