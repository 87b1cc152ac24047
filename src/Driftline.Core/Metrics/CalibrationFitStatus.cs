namespace Driftline.Core.Metrics;

/// <summary>Whether a <see cref="CalibrationFit"/> has numbers, and if not, why.</summary>
internal enum CalibrationFitStatus
{
    /// <summary>Intercept and slope are the maximum-likelihood estimates.</summary>
    Ready,

    /// <summary>Fewer predictions than the minimum asked for.</summary>
    TooFewSamples,

    /// <summary>Every outcome is the same, so there is nothing to separate.</summary>
    OneClass,

    /// <summary>Every prediction has the same logit, so a slope cannot be told from an intercept.</summary>
    NoSpread,

    /// <summary>
    /// The outcomes are completely or quasi-completely separated by the logit: the likelihood
    /// keeps rising as the slope grows, so no finite estimate exists (Albert &amp; Anderson 1984).
    /// </summary>
    Separated,

    /// <summary>Newton's method did not settle within the iteration limit (not expected once the checks above pass).</summary>
    NotConverged,
}
