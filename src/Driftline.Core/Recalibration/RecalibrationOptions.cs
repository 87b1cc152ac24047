using Driftline.Core.Options;

namespace Driftline.Core.Recalibration;

/// <summary>The live correction of the model's log-odds. Bound from the <c>Recalibration</c> section.</summary>
internal sealed class RecalibrationOptions
{
    /// <summary>When the correction is served. Default <see cref="RecalibrationMode.Off"/>: outputs as without this section.</summary>
    public RecalibrationMode Mode { get; set; } = RecalibrationMode.Off;

    /// <summary>
    /// Forgetting of the correction's own fit, in graded labels: a label this many labels old
    /// weighs half a new one. Default 500: short enough to follow a break within a few hundred
    /// labels, long enough that on a calibrated stream the fitted pair costs about 2 / (2 · 720)
    /// ≈ 0.0014 in log-loss (two parameters over an effective sample of 1.44 half-lives).
    /// </summary>
    public double HalfLife { get; set; } = 500;

    /// <summary>
    /// Strength of the pull towards no correction (a = 0, b = 1), as the weight of a Gaussian
    /// prior in labels' worth of curvature. Default 2: a few labels cannot move the fit far.
    /// </summary>
    public double PriorWeight { get; set; } = 2;

    /// <summary>
    /// Labels to learn from before the correction is served; until then the raw probability is
    /// served. Default 100: two parameters fitted from a handful of labels would be noise.
    /// </summary>
    public int MinLabels { get; set; } = 100;

    /// <summary>Smallest slope allowed. Default 0.2: below it the served probabilities would all but ignore the model.</summary>
    public double MinSlope { get; set; } = 0.2;

    /// <summary>Largest slope allowed. Default 5: above it a small change in the model's log-odds swings the served probability.</summary>
    public double MaxSlope { get; set; } = 5;

    /// <summary>
    /// With <see cref="RecalibrationMode.OnAlert"/>: graded labels a model's calibration rules
    /// must stay clear before serving returns to the raw probability. Default 2,000.
    /// </summary>
    public int ClearLabels { get; set; } = 2_000;

    /// <summary>Whether predictions carry a served probability besides the raw one.</summary>
    public bool Enabled => Mode != RecalibrationMode.Off;

    /// <summary>Checks every option; returns the mistakes found.</summary>
    public IEnumerable<OptionError> Validate(string section = "Recalibration")
    {
        if (!Enum.IsDefined(Mode))
        {
            yield return new($"{section}:Mode", $"'{Mode}' is not a mode", "Use Off, Always or OnAlert");
        }
        if (!double.IsFinite(HalfLife) || HalfLife < 20 || HalfLife > 10_000_000)
        {
            yield return new($"{section}:HalfLife", $"{HalfLife} is outside 20–10,000,000 labels", "Use a few hundred labels, e.g. 500");
        }
        if (!double.IsFinite(PriorWeight) || PriorWeight <= 0 || PriorWeight > 1_000_000)
        {
            yield return new($"{section}:PriorWeight", $"{PriorWeight} is not a positive weight up to 1,000,000", "Use a small weight, e.g. 2");
        }
        if (!double.IsFinite(MinSlope) || !double.IsFinite(MaxSlope) || MinSlope <= 0 || MinSlope >= 1 || MaxSlope <= 1 || MaxSlope > 100)
        {
            yield return new($"{section}:MinSlope", $"the slope range {MinSlope}–{MaxSlope} must hold 1 strictly inside, with a positive minimum and a maximum up to 100", "Use MinSlope 0.2 and MaxSlope 5");
        }
        if (MinLabels is < 0 or > 1_000_000)
        {
            yield return new($"{section}:MinLabels", $"{MinLabels} is outside 0–1,000,000", "Use about a hundred labels, e.g. 100");
        }
        if (ClearLabels is < 1 or > 10_000_000)
        {
            yield return new($"{section}:ClearLabels", $"{ClearLabels} is outside 1–10,000,000", "Use a few thousand labels, e.g. 2000");
        }
    }
}
