using Driftline.Core.Events;

namespace Driftline.Cli;

/// <summary>
/// Before <c>monitor</c> reads a whole file: do its first records carry probabilities at all?
/// An events file given to <c>monitor</c> by mistake would otherwise be read to the end, every
/// event dead-lettered, and the run reported as a success.
/// </summary>
internal static class MonitorInputCheck
{
    /// <summary>Records looked at: enough that a file mixing events and probabilities shows a probability. Common practice, not measured.</summary>
    public const int Records = 1_000;

    /// <summary>Most bytes read from the file's start, so one huge line costs no more than this.</summary>
    public const int MaxBytes = 4 << 20;

    /// <summary>
    /// The number of records looked at (at most <see cref="Records"/>) when none of them has a
    /// <c>p</c> and some are events without one; 0 when the file looks like monitor input (or is
    /// empty, or holds only label records, or cannot be read: the run reports those itself).
    /// </summary>
    public static int RecordsWithoutProbability(string path)
    {
        byte[] head;
        try
        {
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite);
            head = new byte[(int)Math.Min(stream.Length, MaxBytes)];
            stream.ReadExactly(head);
            if (stream.Length > MaxBytes)
            {
                // Only whole lines: drop the one the limit cut.
                int end = Array.LastIndexOf(head, (byte)'\n');
                head = end < 0 ? [] : head[..end];
            }
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return 0;
        }
        var parser = new EventParser();
        var record = new ParsedRecord();
        int withoutP = 0, seen = 0;
        var rest = head.AsSpan();
        while (rest.Length > 0 && seen < Records)
        {
            int newline = rest.IndexOf((byte)'\n');
            var line = newline < 0 ? rest : rest[..newline];
            rest = newline < 0 ? [] : rest[(newline + 1)..];
            if (line.Trim(" \t\r"u8).IsEmpty || !Parses(parser, line, record))
            {
                continue;
            }
            if (record.Kind == RecordKind.Event && double.IsNaN(record.Probability))
            {
                withoutP++;
            }
            else if (record.Kind != RecordKind.Label)
            {
                return 0;
            }
            seen++;
        }
        return withoutP > 0 ? seen : 0;
    }

    private static bool Parses(EventParser parser, ReadOnlySpan<byte> line, ParsedRecord record)
    {
        try
        {
            return parser.TryParse(line, record, out _);
        }
        catch (InvalidOperationException)
        {
            // A record the parser cannot take is the run's to dead-letter, not this check's.
            return false;
        }
    }
}
