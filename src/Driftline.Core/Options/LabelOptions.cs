namespace Driftline.Core.Options;

/// <summary>How long predictions wait for late labels. Bound from the <c>Labels</c> section.</summary>
internal sealed class LabelOptions
{
    /// <summary>Most predictions held for a late label; the oldest is dropped beyond it. Default 200,000.</summary>
    public int MaxPending { get; set; } = 200_000;

    /// <summary>Longest wait, in event time, before a prediction is dropped unlabelled. Default 7 days.</summary>
    public TimeSpan MaxAge { get; set; } = TimeSpan.FromDays(7);

    /// <summary>
    /// Furthest one record may move the event-time clock ahead. A record dated further ahead is
    /// scored and graded as if dated at the clock plus this (its own time still goes out on its
    /// prediction), and counted; so one bad timestamp cannot age out every waiting prediction.
    /// Default 1 day.
    /// </summary>
    public TimeSpan MaxClockSkew { get; set; } = TimeSpan.FromDays(1);

    /// <summary>Checks every option; returns the mistakes found.</summary>
    public IEnumerable<OptionError> Validate(string section = "Labels")
    {
        if (MaxPending is < 1 or > 50_000_000)
        {
            yield return new($"{section}:MaxPending", $"{MaxPending} is outside 1–50,000,000", "Use about the number of events that arrive while a label is outstanding, e.g. 200000");
        }
        if (MaxAge <= TimeSpan.Zero)
        {
            yield return new($"{section}:MaxAge", $"{MaxAge} is not a positive duration", "Write it as days.hours:minutes:seconds, e.g. \"7.00:00:00\"");
        }
        if (MaxClockSkew <= TimeSpan.Zero)
        {
            yield return new($"{section}:MaxClockSkew", $"{MaxClockSkew} is not a positive duration", "Write it as days.hours:minutes:seconds, e.g. \"1.00:00:00\"");
        }
    }
}
