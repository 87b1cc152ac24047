namespace Driftline.Core.Options;

/// <summary>Rolling measures and how often they are reported. Bound from the <c>Monitor</c> section.</summary>
internal sealed class MonitorOptions
{
    /// <summary>Labels in the reported rolling window. Default 2,000.</summary>
    public int Window { get; set; } = 2_000;

    /// <summary>A metrics row is written every this many labels. Default 1,000.</summary>
    public int MetricsEvery { get; set; } = 1_000;

    /// <summary>Reliability bins (equal width). Default 10.</summary>
    public int Bins { get; set; } = 10;

    /// <summary>
    /// A categorical feature (e.g. "zone") whose values split the stream into segments; each
    /// alert then names the segments furthest off. Default null: no segments.
    /// </summary>
    public string? SegmentBy { get; set; }

    /// <summary>Most segments tracked; later values are pooled as "(other)". Default 50.</summary>
    public int MaxSegments { get; set; } = 50;

    /// <summary>Checks every option; returns the mistakes found.</summary>
    public IEnumerable<OptionError> Validate(string section = "Monitor")
    {
        if (Window is < 10 or > 10_000_000)
        {
            yield return new($"{section}:Window", $"{Window} is outside 10–10,000,000", "Use a few thousand labels, e.g. 2000");
        }
        if (MetricsEvery < 1)
        {
            yield return new($"{section}:MetricsEvery", $"{MetricsEvery} is less than 1", "Use e.g. 1000 for a row every thousand labels");
        }
        if (SegmentBy is { Length: 0 })
        {
            yield return new($"{section}:SegmentBy", "is empty", "Name a categorical feature such as \"zone\", or leave it out");
        }
        if (MaxSegments is < 1 or > 1_000)
        {
            yield return new($"{section}:MaxSegments", $"{MaxSegments} is outside 1–1,000", "Use 50");
        }
        if (Bins is < 2 or > 100)
        {
            yield return new($"{section}:Bins", $"{Bins} is outside 2–100", "Use 10");
        }
    }
}
