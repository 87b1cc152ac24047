using System.Text.Json.Serialization;

namespace Driftline.Core.Options;

/// <summary>
/// The online model: features, learner and forgetting. Bound from the <c>Model</c> section.
/// </summary>
internal sealed class ModelOptions
{
    /// <summary>
    /// Learning rule. Default <see cref="LearnerKind.AdaGrad"/>: on the demo stream it had the
    /// lowest log-loss and calibration error of the settings tried (README, "Defaults").
    /// Use <see cref="LearnerKind.Ftrl"/> with <see cref="L1"/> for sparse models.
    /// </summary>
    public LearnerKind Learner { get; set; } = LearnerKind.AdaGrad;

    /// <summary>Weights per model as a power of two (2^HashBits). Default 18 (262,144 slots); 10–28 allowed.</summary>
    public int HashBits { get; set; } = 18;

    /// <summary>Base learning rate (α). Default 0.1.</summary>
    public double LearningRate { get; set; } = 0.1;

    /// <summary>Smoothing of the per-coordinate rate (β): rate = α / (β + √Σg²). Default 1.</summary>
    public double RateSmoothing { get; set; } = 1.0;

    /// <summary>L1 penalty (FTRL only: drives weights of weak features to exactly zero). Default 0.</summary>
    public double L1 { get; set; }

    /// <summary>L2 penalty. Default 0.</summary>
    public double L2 { get; set; }

    /// <summary>
    /// Forgetting, as the number of labels after which old evidence counts half. 0 turns
    /// forgetting off (the model then slowly freezes, as plain AdaGrad does). Default 5,000.
    /// </summary>
    public double HalfLifeLabels { get; set; } = 5_000;

    /// <summary>How numeric features are scaled. Default <see cref="ScalingMode.Online"/>.</summary>
    public ScalingMode Scaling { get; set; } = ScalingMode.Online;

    /// <summary>Divisors for named numeric features; a named feature is never standardised online.</summary>
    public Dictionary<string, double> FixedScales { get; set; } = new(StringComparer.Ordinal);

    /// <summary>Standardised values are clipped to ± this many standard deviations. Default 8.</summary>
    public double StandardisedLimit { get; set; } = 8;

    /// <summary>Pairwise interactions, each written <c>"a*b"</c> with two feature names.</summary>
    public List<string> Interactions { get; set; } = [];

    /// <summary>Most distinct keys (one model each) before new keys are rejected. Default 64.</summary>
    public int MaxModels { get; set; } = 64;

    /// <summary>
    /// The class names of a multiclass (softmax) model, in the order of its outputs; at least
    /// three. Null (the default) keeps the model binary with labels 0 and 1. A label names a
    /// class by its text, so <c>3</c> and <c>"3"</c> both name the class "3".
    /// </summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public List<string>? Classes { get; set; }

    /// <summary>Number of outcomes: the length of <see cref="Classes"/>, or 2 for a binary model.</summary>
    [JsonIgnore]
    public int ClassCount => Classes is { Count: > 0 } classes ? classes.Count : 2;

    /// <summary>True when <see cref="Classes"/> makes the model multiclass.</summary>
    [JsonIgnore]
    public bool IsMulticlass => Classes is { Count: > 0 };

    /// <summary>Checks every option; returns the mistakes found.</summary>
    public IEnumerable<OptionError> Validate(string section = "Model")
    {
        if (Classes is { } classes)
        {
            if (classes.Count < 3)
            {
                yield return new($"{section}:Classes", $"lists {classes.Count} class(es); a multiclass model needs at least 3",
                    "List three or more class names, e.g. [\"on-time\",\"late\",\"failed\"], or remove Classes for a binary model with labels 0 and 1");
            }
            for (int i = 0; i < classes.Count; i++)
            {
                if (string.IsNullOrWhiteSpace(classes[i]))
                {
                    yield return new($"{section}:Classes:{i}", "is empty", "Give every class a name, e.g. \"late\"");
                }
                else if (classes.IndexOf(classes[i]) < i)
                {
                    yield return new($"{section}:Classes:{i}", $"'{classes[i]}' is listed twice", "List each class once");
                }
            }
        }
        if (HashBits is < 10 or > 28)
        {
            yield return new($"{section}:HashBits", $"{HashBits} is outside 10–28", "Use 18 for up to about a hundred thousand distinct feature values, more for larger vocabularies");
        }
        if (!(LearningRate > 0) || !double.IsFinite(LearningRate))
        {
            yield return new($"{section}:LearningRate", $"{LearningRate} is not a positive number", "Use a value such as 0.1");
        }
        if (!(RateSmoothing > 0) || !double.IsFinite(RateSmoothing))
        {
            yield return new($"{section}:RateSmoothing", $"{RateSmoothing} is not a positive number", "Use 1");
        }
        if (!(L1 >= 0) || !double.IsFinite(L1))
        {
            yield return new($"{section}:L1", $"{L1} is negative or not a number", "Use 0 (off) or a small positive penalty such as 0.5");
        }
        if (L1 > 0 && Learner != LearnerKind.Ftrl)
        {
            yield return new($"{section}:L1", "L1 applies only to the Ftrl learner", "Set Learner to Ftrl or L1 to 0");
        }
        if (!(L2 >= 0) || !double.IsFinite(L2))
        {
            yield return new($"{section}:L2", $"{L2} is negative or not a number", "Use 0 (off) or a small positive penalty such as 1");
        }
        if (!(HalfLifeLabels >= 0) || !double.IsFinite(HalfLifeLabels) || (HalfLifeLabels > 0 && HalfLifeLabels < 10))
        {
            yield return new($"{section}:HalfLifeLabels", $"{HalfLifeLabels} is not 0 or at least 10", "Use 0 for no forgetting, or a number of labels such as 20000");
        }
        if (!(StandardisedLimit > 0))
        {
            yield return new($"{section}:StandardisedLimit", $"{StandardisedLimit} is not positive", "Use 8");
        }
        foreach (var (name, scale) in FixedScales)
        {
            if (!(scale > 0) || !double.IsFinite(scale))
            {
                yield return new($"{section}:FixedScales:{name}", $"{scale} is not a positive number", "Give the divisor that brings the feature near 1, e.g. 1000 for values in the thousands");
            }
        }
        for (int i = 0; i < Interactions.Count; i++)
        {
            var parts = Interactions[i].Split('*', StringSplitOptions.TrimEntries);
            if (parts.Length != 2 || parts[0].Length == 0 || parts[1].Length == 0)
            {
                yield return new($"{section}:Interactions:{i}", $"'{Interactions[i]}' is not two feature names joined by *", "Write it as \"zone*raining\"");
            }
        }
        if (MaxModels < 1)
        {
            yield return new($"{section}:MaxModels", $"{MaxModels} is less than 1", "Use at least 1 (one model per key)");
        }
    }
}
