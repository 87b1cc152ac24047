namespace Driftline.Core.Scoring;

/// <summary>What one record did to the core.</summary>
internal enum StepOutcome
{
    /// <summary>Scored; waiting for its label.</summary>
    Scored,

    /// <summary>Scored, then learned from its own label.</summary>
    ScoredAndLearned,

    /// <summary>A late label graded its prediction and was learned from.</summary>
    LateLabelJoined,

    /// <summary>An external probability was recorded (monitor mode).</summary>
    ProbabilityRecorded,

    /// <summary>A label for an id with no pending prediction.</summary>
    UnknownLabel,

    /// <summary>A second label for an already graded prediction: ignored.</summary>
    DuplicateLabel,

    /// <summary>Refused by the core (see the reason); nothing changed.</summary>
    Rejected,
}
