using System.Threading.Channels;
using Driftline.Core.Events;

namespace Driftline.Pipeline;

/// <summary>
/// The source stage for files and stdin: splits a byte stream into lines with
/// <see cref="LineSplitter"/> (bounded memory, a leading byte order mark skipped), parses each
/// batch and sends it on. Blank lines are skipped but counted, so line numbers in dead letters
/// match the file.
/// </summary>
internal static class LineReader
{
    /// <summary>
    /// Reads <paramref name="input"/> to its end into batches taken from <paramref name="pool"/>,
    /// parsed with <paramref name="parser"/> and written to <paramref name="output"/>; completes <paramref name="output"/> at the end,
    /// with the exception if reading fails. A line over <paramref name="maxLineBytes"/> is not
    /// held whole: it is skipped to its end and handed on as a rejected line with its prefix.
    /// </summary>
    public static async Task RunAsync(Stream input, EventParser parser, ChannelReader<LineBatch> pool, ChannelWriter<LineBatch> output, CancellationToken cancellation,
        int maxLineBytes = Core.Options.InputOptions.DefaultMaxLineBytes)
    {
        try
        {
            var lines = new LineSplitter(maxLineBytes);
            long lineNumber = 1;
            var batch = await TakeAsync(pool, cancellation).ConfigureAwait(false);
            batch.FirstLine = lineNumber;
            while (true)
            {
                var space = lines.Space();
                int read = await input.ReadAsync(space, cancellation).ConfigureAwait(false);
                lines.Advance(read);
                LineKind found;
                while ((found = Take(lines, batch)) != LineKind.NeedMore && found != LineKind.End)
                {
                    lineNumber++;
                    if (batch.IsFull)
                    {
                        await HandOnAsync(batch, parser, output, cancellation).ConfigureAwait(false);
                        batch = await TakeAsync(pool, cancellation).ConfigureAwait(false);
                        batch.FirstLine = lineNumber;
                    }
                }
                if (found == LineKind.End)
                {
                    break;
                }
                if (read > 0 && batch.Count > 0 && read < space.Length / 2)
                {
                    // A short read means the source has nothing more ready (a live pipe):
                    // hand the lines on now rather than wait for a full batch.
                    await HandOnAsync(batch, parser, output, cancellation).ConfigureAwait(false);
                    batch = await TakeAsync(pool, cancellation).ConfigureAwait(false);
                    batch.FirstLine = lineNumber;
                }
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

    // Moves one line from the splitter into the batch (blank lines are kept, as empty lines,
    // so numbering stays aligned; the scorer skips them).
    private static LineKind Take(LineSplitter lines, LineBatch batch)
    {
        var found = lines.Next(out var line, out long oversized);
        if (found == LineKind.Line)
        {
            batch.Add(line);
        }
        else if (found == LineKind.Oversized)
        {
            batch.AddRejected(line, lines.OversizedReason(oversized), oversized);
        }
        return found;
    }

    private static ValueTask HandOnAsync(LineBatch batch, EventParser parser, ChannelWriter<LineBatch> output, CancellationToken cancellation)
    {
        batch.Parse(parser);
        return output.WriteAsync(batch, cancellation);
    }

    private static async ValueTask<LineBatch> TakeAsync(ChannelReader<LineBatch> pool, CancellationToken cancellation)
    {
        var batch = await pool.ReadAsync(cancellation).ConfigureAwait(false);
        batch.Clear();
        return batch;
    }
}
