namespace Driftline.Core.Metrics;

/// <summary>One risk group of a Hosmer–Lemeshow table.</summary>
/// <param name="Count">Predictions in the group, n_g.</param>
/// <param name="ObservedPositive">Outcomes equal to 1, O_g.</param>
/// <param name="ExpectedPositive">Sum of the predicted probabilities, E_g.</param>
/// <param name="MinP">Smallest probability in the group.</param>
/// <param name="MaxP">Largest probability in the group.</param>
internal readonly record struct HosmerLemeshowGroup(int Count, int ObservedPositive, double ExpectedPositive, double MinP, double MaxP)
{
    /// <summary>Outcomes equal to 0, n_g − O_g.</summary>
    public int ObservedNegative => Count - ObservedPositive;

    /// <summary>n_g − E_g.</summary>
    public double ExpectedNegative => Count - ExpectedPositive;

    /// <summary>
    /// The group's term (O_g − E_g)² / (E_g·(1 − E_g/n_g)). When every p in the group is 0 (or
    /// every one is 1) the denominator is 0: the term is 0 if the outcomes agree and +∞ if not.
    /// </summary>
    public double Term
    {
        get
        {
            double difference = ObservedPositive - ExpectedPositive;
            double variance = ExpectedPositive * (1 - (ExpectedPositive / Count));
            if (variance > 0)
            {
                return difference * difference / variance;
            }

            return difference == 0 ? 0 : double.PositiveInfinity;
        }
    }
}
