namespace Driftline.Core.Scoring;

/// <summary>What happened to a label-only record.</summary>
internal enum LabelJoin
{
    /// <summary>It graded a pending prediction.</summary>
    Joined,

    /// <summary>No prediction with that id is held (never seen, or dropped long ago).</summary>
    UnknownId,

    /// <summary>The prediction had already been graded.</summary>
    Duplicate,
}
