namespace Driftline.Pipeline;

/// <summary>A rejected record: where it came from, why, and its text (cut to <see cref="MaxRawChars"/>).</summary>
/// <param name="Line">1-based line in the input file (0 when the source has no lines).</param>
/// <param name="Reason">Why it was rejected, in plain words.</param>
/// <param name="Raw">The record's text, cut.</param>
internal sealed record DeadLetter(long Line, string Reason, string Raw)
{
    /// <summary>Longest raw text kept.</summary>
    public const int MaxRawChars = 2_000;
}
