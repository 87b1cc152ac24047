using Driftline.Core.Options;

namespace Driftline.Core.Challengers;

/// <summary>How a challenger proves itself against the champion. Bound from the <c>Challengers</c> section.</summary>
internal sealed class ChallengerOptions
{
    /// <summary>
    /// Chance of declaring a challenger better when it is not, over the whole stream (not per
    /// label): the bound holds however long the test runs. Default 0.01.
    /// </summary>
    public double ErrorRate { get; set; } = 0.01;

    /// <summary>
    /// Largest per-label log-loss difference counted, in nats; bigger ones are clipped to it, so
    /// one wild label cannot decide. Default 0.5. The test is then about the mean clipped
    /// difference, which has the same sign as the mean difference unless large differences
    /// favour the other side.
    /// </summary>
    public double LossClip { get; set; } = 0.5;

    /// <summary>Whether a challenger declared better replaces the champion in place. Default false: only the evidence is reported.</summary>
    public bool AutoPromote { get; set; }

    /// <summary>Checks every option; returns the mistakes found.</summary>
    public IEnumerable<OptionError> Validate(string section = "Challengers")
    {
        if (!double.IsFinite(ErrorRate) || ErrorRate <= 0 || ErrorRate >= 0.5)
        {
            yield return new($"{section}:ErrorRate", $"{ErrorRate} is not a probability between 0 and 0.5", "Use a small rate, e.g. 0.01");
        }
        if (!double.IsFinite(LossClip) || LossClip <= 0 || LossClip > 50)
        {
            yield return new($"{section}:LossClip", $"{LossClip} is outside (0, 50] nats", "Use about the largest log-loss difference you expect between two reasonable models, e.g. 0.5");
        }
    }
}
