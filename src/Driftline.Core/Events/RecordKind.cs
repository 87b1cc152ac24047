namespace Driftline.Core.Events;

/// <summary>What a parsed record asks the scorer to do.</summary>
internal enum RecordKind
{
    /// <summary>An event with features: scored, then learned from if it carries a label.</summary>
    Event,

    /// <summary>A label-only record that grades an earlier prediction with the same id.</summary>
    Label,

    /// <summary>An external model's probability (monitor mode), optionally with its label.</summary>
    Probability,
}
