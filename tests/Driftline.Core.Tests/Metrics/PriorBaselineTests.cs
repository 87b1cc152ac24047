using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>Laplace's rule of succession, (n1 + 1) / (N + 2): common practice, no source needed.</summary>
public sealed class PriorBaselineTests
{
    [Fact]
    public void Predict_Empty_IsOneHalf() => Assert.Equal(0.5, new PriorBaseline().Predict());

    [Fact]
    public void Predict_ThreePositivesOfFour_IsFourSixths()
    {
        var baseline = new PriorBaseline();
        foreach (int y in new[] { 1, 0, 1, 1 })
        {
            baseline.Add(y);
        }

        Assert.Equal(4.0 / 6.0, baseline.Predict());
        Assert.Equal(4, baseline.Count);
        Assert.Equal(3, baseline.Positives);
    }

    [Fact]
    public void Predict_OnlyNegatives_StaysAboveZero()
    {
        var baseline = new PriorBaseline();
        for (int i = 0; i < 1000; i++)
        {
            baseline.Add(0);
        }

        Assert.Equal(1.0 / 1002.0, baseline.Predict());
    }

    [Fact]
    public void Add_NotBinary_ThrowsAndCountsNothing()
    {
        var baseline = new PriorBaseline();

        var e = Assert.Throws<ArgumentOutOfRangeException>(() => baseline.Add(2));

        Assert.Equal("y", e.ParamName);
        Assert.Equal(0, baseline.Count);
    }

    [Fact]
    public void Copy_ThenAdd_LeavesOriginalUnchanged()
    {
        var baseline = new PriorBaseline();
        baseline.Add(1);
        PriorBaseline copy = baseline.Copy();

        copy.Add(0);

        Assert.Equal(1, baseline.Count);
        Assert.Equal(2, copy.Count);
        Assert.Equal(2.0 / 3.0, baseline.Predict());
    }

    [Fact]
    public void Restore_SavedCounts_PredictsAsBefore()
    {
        PriorBaseline restored = PriorBaseline.Restore(count: 4, positives: 3);

        Assert.Equal(4.0 / 6.0, restored.Predict());
    }

    [Theory]
    [InlineData(-1, 0, "count")]
    [InlineData(3, -1, "positives")]
    [InlineData(3, 4, "positives")]
    public void Restore_ImpossibleCounts_Throws(long count, long positives, string parameter)
    {
        var e = Assert.Throws<ArgumentOutOfRangeException>(() => PriorBaseline.Restore(count, positives));

        Assert.Equal(parameter, e.ParamName);
    }
}
