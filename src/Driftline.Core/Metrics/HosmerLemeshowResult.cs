namespace Driftline.Core.Metrics;

/// <summary>A Hosmer–Lemeshow test over a set of graded predictions.</summary>
/// <param name="Statistic">Σ_g (O_g − E_g)² / (E_g·(1 − E_g/n_g)); NaN when not ready.</param>
/// <param name="DegreesOfFreedom">Groups − 2.</param>
/// <param name="PValue">P(χ²_df ≥ statistic); small means the probabilities do not fit the outcomes; NaN when not ready.</param>
/// <param name="Groups">The risk groups, lowest probabilities first; empty when not ready.</param>
internal sealed record HosmerLemeshowResult(double Statistic, int DegreesOfFreedom, double PValue, IReadOnlyList<HosmerLemeshowGroup> Groups)
{
    /// <summary>False when there were fewer predictions than groups, so no statistic was computed.</summary>
    public bool IsReady => !double.IsNaN(Statistic);
}
