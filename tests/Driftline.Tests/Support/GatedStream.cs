namespace Driftline.Tests.Support;

/// <summary>
/// Standard input as a live pipe: serves <paramref name="first"/>, then waits (as an idle
/// pipe does) until <see cref="Open"/> lets <paramref name="rest"/> through, or the read's
/// token is cancelled. Not seekable, like a pipe.
/// </summary>
internal sealed class GatedStream(byte[] first, byte[] rest) : Stream
{
    private readonly TaskCompletionSource _gate = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private int _position;

    public override bool CanRead => true;

    public override bool CanSeek => false;

    public override bool CanWrite => false;

    public override long Length => throw new NotSupportedException();

    public override long Position
    {
        get => throw new NotSupportedException();
        set => throw new NotSupportedException();
    }

    public void Open() => _gate.TrySetResult();

    public override async ValueTask<int> ReadAsync(Memory<byte> buffer, CancellationToken cancellationToken = default)
    {
        if (_position >= first.Length)
        {
            // Like a blocking read of a pipe: it does not observe the token while it waits.
            await _gate.Task.ConfigureAwait(false);
        }
        var all = _position < first.Length ? first.AsMemory(_position) : rest.AsMemory(_position - first.Length);
        int n = Math.Min(all.Length, buffer.Length);
        all[..n].CopyTo(buffer);
        _position += n;
        return n;
    }

    public override int Read(byte[] buffer, int offset, int count) => ReadAsync(buffer.AsMemory(offset, count)).AsTask().GetAwaiter().GetResult();

    public override void Flush()
    {
    }

    public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

    public override void SetLength(long value) => throw new NotSupportedException();

    public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
}
