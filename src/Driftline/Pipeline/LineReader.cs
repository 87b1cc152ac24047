using System.Threading.Channels;
using Driftline.Core.Events;

namespace Driftline.Pipeline;

/// <summary>
/// The source stage for files and stdin: splits a byte stream into lines (LF, with an
/// optional CR before it), parses each batch and sends it on. Blank lines are skipped but
/// counted, so line numbers in dead letters match the file.
/// </summary>
internal static class LineReader
{
    /// <summary>
    /// Reads <paramref name="input"/> to its end into batches taken from <paramref name="pool"/>,
    /// parsed with <paramref name="parser"/> and written to <paramref name="output"/>; completes <paramref name="output"/> at the end,
    /// with the exception if reading fails.
    /// </summary>
    public static async Task RunAsync(Stream input, EventParser parser, ChannelReader<LineBatch> pool, ChannelWriter<LineBatch> output, CancellationToken cancellation)
    {
        try
        {
            var buffer = new byte[1 << 20];
            int filled = 0;
            long lineNumber = 1;
            var batch = await TakeAsync(pool, cancellation).ConfigureAwait(false);
            batch.FirstLine = lineNumber;
            while (true)
            {
                if (filled == buffer.Length)
                {
                    // A line longer than the buffer: grow it (rare; parse rejects huge records).
                    Array.Resize(ref buffer, buffer.Length * 2);
                }
                int read = await input.ReadAsync(buffer.AsMemory(filled), cancellation).ConfigureAwait(false);
                bool end = read == 0;
                filled += read;
                int consumed = 0;
                while (true)
                {
                    int newline = buffer.AsSpan(consumed, filled - consumed).IndexOf((byte)'\n');
                    if (newline < 0)
                    {
                        break;
                    }
                    AddLine(batch, buffer.AsSpan(consumed, newline));
                    lineNumber++;
                    consumed += newline + 1;
                    if (batch.IsFull)
                    {
                        await HandOnAsync(batch, parser, output, cancellation).ConfigureAwait(false);
                        batch = await TakeAsync(pool, cancellation).ConfigureAwait(false);
                        batch.FirstLine = lineNumber;
                    }
                }
                if (!end && batch.Count > 0 && filled < buffer.Length / 2 && read < buffer.Length / 2)
                {
                    // A short read means the source has nothing more ready (a live pipe):
                    // hand the lines on now rather than wait for a full batch.
                    await HandOnAsync(batch, parser, output, cancellation).ConfigureAwait(false);
                    batch = await TakeAsync(pool, cancellation).ConfigureAwait(false);
                    batch.FirstLine = lineNumber;
                }
                if (end)
                {
                    if (consumed < filled)
                    {
                        AddLine(batch, buffer.AsSpan(consumed, filled - consumed));
                    }
                    break;
                }
                buffer.AsSpan(consumed, filled - consumed).CopyTo(buffer);
                filled -= consumed;
            }
            if (batch.Count > 0)
            {
                await HandOnAsync(batch, parser, output, cancellation).ConfigureAwait(false);
            }
            output.Complete();
        }
        catch (Exception ex)
        {
            output.Complete(ex);
            throw;
        }
    }

    private static ValueTask HandOnAsync(LineBatch batch, EventParser parser, ChannelWriter<LineBatch> output, CancellationToken cancellation)
    {
        batch.Parse(parser);
        return output.WriteAsync(batch, cancellation);
    }

    private static void AddLine(LineBatch batch, ReadOnlySpan<byte> line)
    {
        if (line.Length > 0 && line[^1] == (byte)'\r')
        {
            line = line[..^1];
        }
        // Blank lines are kept (as empty lines) so numbering stays aligned; the scorer skips them.
        batch.Add(line);
    }

    private static async ValueTask<LineBatch> TakeAsync(ChannelReader<LineBatch> pool, CancellationToken cancellation)
    {
        var batch = await pool.ReadAsync(cancellation).ConfigureAwait(false);
        batch.Clear();
        return batch;
    }
}
