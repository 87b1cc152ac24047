using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

public sealed class HosmerLemeshowTests
{
    [Fact]
    public void Compute_SmallExampleWithTies_GroupsStablyAndSumsByHand()
    {
        // Seven predictions in 3 groups: sizes 3, 2, 2. Sorted stably by p the order is
        // #1 (0.1, y0), #3 (0.1, y1), #0 (0.2, y0) | #4 (0.5, y1), #2 (0.5, y0) | #5 (0.8, y1), #6 (0.9, y1).
        GradedPrediction[] predictions =
            [new(0.2, 0), new(0.1, 0), new(0.5, 0), new(0.1, 1), new(0.5, 1), new(0.8, 1), new(0.9, 1)];

        HosmerLemeshowResult result = HosmerLemeshow.Compute(predictions, groups: 3);

        Assert.Equal([3, 2, 2], result.Groups.Select(g => g.Count));
        Assert.Equal([1, 1, 2], result.Groups.Select(g => g.ObservedPositive));
        Assert.Equal(0.4, result.Groups[0].ExpectedPositive, 1e-15);
        Assert.Equal(1.0, result.Groups[1].ExpectedPositive, 1e-15);
        Assert.Equal(1.7, result.Groups[2].ExpectedPositive, 1e-15);

        // (1 − 0.4)² / (0.4·(1 − 0.4/3)) + 0 + (2 − 1.7)² / (1.7·(1 − 1.7/2)).
        double expected = (0.36 / (0.4 * (1 - (0.4 / 3)))) + (0.09 / (1.7 * 0.15));
        Assert.Equal(expected, result.Statistic, 1e-12);
        Assert.Equal(1, result.DegreesOfFreedom);

        // χ² with 1 df: P(X ≥ x) = erfc(√(x/2)) (common practice; checked with MathNet's erfc).
        Assert.Equal(MathNet.Numerics.SpecialFunctions.Erfc(Math.Sqrt(expected / 2)), result.PValue, 1e-12);
    }

    [Fact]
    public void Compute_FewerPredictionsThanGroups_IsNotReady()
    {
        HosmerLemeshowResult result = HosmerLemeshow.Compute([new GradedPrediction(0.3, 1)]);

        Assert.False(result.IsReady);
        Assert.True(double.IsNaN(result.PValue));
        Assert.Empty(result.Groups);
        Assert.Equal(8, result.DegreesOfFreedom);
    }

    [Fact]
    public void Compute_CertainPredictionsThatMiss_GiveInfiniteStatisticAndZeroPValue()
    {
        GradedPrediction[] predictions = [new(0, 1), new(0, 0), new(0.5, 1), new(0.5, 0), new(1, 1), new(1, 1)];

        HosmerLemeshowResult result = HosmerLemeshow.Compute(predictions, groups: 3);

        Assert.True(double.IsPositiveInfinity(result.Statistic));
        Assert.Equal(0, result.PValue);
        Assert.Equal(0, result.Groups[2].Term);
    }

    [Fact]
    public void Compute_WindowContents_SameAsTheLastPredictionsInArrivalOrder()
    {
        var window = new CalibrationWindow(capacity: 500);
        var random = new Random(5);
        var all = new List<GradedPrediction>();
        for (int i = 0; i < 1_300; i++)
        {
            double p = Math.Round(random.NextDouble(), 2);
            int y = random.NextDouble() < p ? 1 : 0;
            all.Add(new GradedPrediction(p, y));
            window.Add(p, y);
        }

        HosmerLemeshowResult fromWindow = HosmerLemeshow.Compute(window.ToArray());
        HosmerLemeshowResult fromList = HosmerLemeshow.Compute(all.Skip(800).ToArray());

        Assert.Equal(fromList.Statistic, fromWindow.Statistic);
        Assert.Equal(fromList.Groups, fromWindow.Groups);
        Assert.InRange(fromWindow.PValue, 0, 1);
    }

    [Fact]
    public void Compute_TooFewGroupsOrInvalidPrediction_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => HosmerLemeshow.Compute([new GradedPrediction(0.5, 1)], groups: 2));
        Assert.Throws<ArgumentOutOfRangeException>(() => HosmerLemeshow.Compute([new GradedPrediction(double.NaN, 1)]));
    }
}
