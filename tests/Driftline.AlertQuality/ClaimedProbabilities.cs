using Driftline.Core.Fitting;
using MathNet.Numerics.Distributions;
using MathNet.Numerics.Integration;

namespace Driftline.AlertQuality;

/// <summary>
/// The distribution of the probabilities the model claims, Beta(α, β), with the exact mean
/// per-label Kullback–Leibler divergence of a break from it.
/// </summary>
internal sealed class ClaimedProbabilities(double alpha, double beta)
{
    /// <summary>First Beta parameter.</summary>
    public double Alpha { get; } = alpha;

    /// <summary>Second Beta parameter.</summary>
    public double Beta { get; } = beta;

    /// <summary>One claimed probability.</summary>
    public double Sample(Random random) => MathNet.Numerics.Distributions.Beta.Sample(random, Alpha, Beta);

    /// <summary>The true probability after <paramref name="scenario"/>'s break when the model claims <paramref name="p"/>.</summary>
    public static double Truth(double p, BreakScenario scenario) =>
        LogisticMath.Probability(scenario.Shift + (scenario.Slope * Math.Log(p / (1 - p))));

    /// <summary>
    /// E_p[KL(Bern(q) ‖ Bern(p))]: the evidence per label that the outcomes, drawn from the truth q,
    /// give against the claimed p; integrated over the Beta density by 512-point Gauss–Legendre.
    /// </summary>
    public double MeanKl(BreakScenario scenario)
    {
        var density = new Beta(Alpha, Beta);
        return GaussLegendreRule.Integrate(
            p =>
            {
                if (p <= 0 || p >= 1)
                {
                    return 0;
                }

                double q = Truth(p, scenario);
                double kl = (q * Math.Log(q / p)) + ((1 - q) * Math.Log((1 - q) / (1 - p)));
                return density.Density(p) * kl;
            },
            0,
            1,
            512);
    }
}
