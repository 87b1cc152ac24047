using Driftline.Report;
using Xunit;

namespace Driftline.Tests.Report;

public sealed class WilsonIntervalTests
{
    // Reference values computed separately in Python (float64) from the closed form of the
    // Wilson score interval with z = 1.959963984540054, to 9 decimals; tolerance 1e-8.
    [Theory]
    [InlineData(5, 10, 0.236593091, 0.763406909)]
    [InlineData(0, 10, 0.0, 0.277532800)]
    [InlineData(10, 10, 0.722467200, 1.0)]
    [InlineData(81, 263, 0.255288520, 0.366209577)]
    public void Of_KnownCounts_MatchesReference(int successes, int trials, double lower, double upper)
    {
        var (lo, hi) = WilsonInterval.Of(successes, trials);
        Assert.Equal(lower, lo, 1e-8);
        Assert.Equal(upper, hi, 1e-8);
    }

    [Fact]
    public void Of_NoTrials_IsNaN()
    {
        var (lo, hi) = WilsonInterval.Of(0, 0);
        Assert.True(double.IsNaN(lo) && double.IsNaN(hi));
    }
}
