namespace Driftline.Pipeline;

/// <summary>What <see cref="LineSplitter.Next"/> found.</summary>
internal enum LineKind
{
    /// <summary>A line within the limit.</summary>
    Line,

    /// <summary>A line over the limit: only its prefix is given, with its full length.</summary>
    Oversized,

    /// <summary>No complete line is buffered: read more.</summary>
    NeedMore,

    /// <summary>The stream has ended and every line was given.</summary>
    End,
}
