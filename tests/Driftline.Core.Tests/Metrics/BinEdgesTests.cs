using CsCheck;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

public sealed class BinEdgesTests
{
    [Fact]
    public void Indexes_AnyProbabilityAndBinCount_AgreeWithSearchsortedOnLinspace()
    {
        // numpy.searchsorted(edges[1:-1], p, side) written as a count over the interior edges.
        (from bins in Gen.Int[1, 200]
         from p in CalibrationProperties.Probability(bins)
         select (bins, p))
        .Sample((bins, p) =>
        {
            double[] edges = NaiveCalibration.Linspace(bins);
            var sut = new BinEdges(bins);
            int right = 0, left = 0;
            for (int e = 1; e < bins; e++)
            {
                right += edges[e] <= p ? 1 : 0;
                left += edges[e] < p ? 1 : 0;
            }

            Assert.Equal(right, sut.LeftClosedIndex(p));
            Assert.Equal(left, sut.RightClosedIndex(p));
        }, iter: 20_000);
    }

    [Theory]
    [InlineData(0.0, 0, 0)]
    [InlineData(0.2, 2, 1)]
    [InlineData(0.5, 5, 4)]
    [InlineData(1.0, 9, 9)]
    [InlineData(0.30000000000000004, 3, 2)]
    [InlineData(0.3, 2, 2)]
    public void Indexes_TenBinsOnEdges_DifferOnlyWhereConventionsDo(double p, int leftClosed, int rightClosed)
    {
        var edges = new BinEdges(10);

        Assert.Equal(leftClosed, edges.LeftClosedIndex(p));
        Assert.Equal(rightClosed, edges.RightClosedIndex(p));
    }

    [Fact]
    public void Constructor_OneBin_CoversWholeInterval()
    {
        var edges = new BinEdges(1);

        Assert.Equal(0.0, edges.Lower(0));
        Assert.Equal(1.0, edges.Upper(0));
        Assert.Equal(0, edges.LeftClosedIndex(1.0));
        Assert.Equal(0, edges.RightClosedIndex(0.0));
    }
}
