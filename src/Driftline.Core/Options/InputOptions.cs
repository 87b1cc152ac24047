namespace Driftline.Core.Options;

/// <summary>
/// How large one input record may be. Bound from the <c>Input</c> section. A record over a
/// limit is a dead letter with the sizes in its reason; it never reaches a model, an output
/// file or a saved model, and memory stays bounded by the limits whatever the input.
/// </summary>
internal sealed class InputOptions
{
    /// <summary>Default of <see cref="MaxLineBytes"/>: 1 MiB.</summary>
    public const int DefaultMaxLineBytes = 1 << 20;

    /// <summary>
    /// Longest line of a file or standard input, and longest Kafka message, in bytes (line
    /// break not counted). A longer line is skipped to its end keeping only a short prefix for
    /// the dead letter, so it is never held whole. Default 1 MiB (1,048,576).
    /// </summary>
    public int MaxLineBytes { get; set; } = DefaultMaxLineBytes;

    /// <summary>
    /// Longest id, key, feature name or feature value text, in UTF-8 bytes after JSON escapes
    /// are resolved. These texts are held with pending predictions and written to outputs and
    /// saved models, so one huge value must not be copied on. Default 1,024.
    /// </summary>
    public int MaxTextBytes { get; set; } = DefaultMaxTextBytes;

    /// <summary>Default of <see cref="MaxTextBytes"/>: 1,024 bytes.</summary>
    public const int DefaultMaxTextBytes = 1_024;

    /// <summary>Checks every option; returns the mistakes found.</summary>
    public IEnumerable<OptionError> Validate(string section = "Input")
    {
        if (MaxLineBytes is < 1_024 or > 256 << 20)
        {
            yield return new($"{section}:MaxLineBytes", $"{MaxLineBytes} is outside 1,024–268,435,456 bytes", "Use a little more than your largest record, e.g. 1048576 (1 MiB)");
        }
        if (MaxTextBytes < 16 || MaxTextBytes > MaxLineBytes)
        {
            yield return new($"{section}:MaxTextBytes", $"{MaxTextBytes} is outside 16 bytes to Input:MaxLineBytes ({MaxLineBytes})", "Use a little more than your longest id or feature value, e.g. 1024");
        }
    }
}
