using Driftline.Report;
using Xunit;

namespace Driftline.Tests.Report;

public sealed class ChallengerCurveTests
{
    [Fact]
    public void Add_ManyStretches_MergesKeepingEachPointTheMeanOfItsLabels()
    {
        // Losses that step every 10,000 pairs: each point is the exact mean of the pairs it
        // covers, so a point inside a step shows the step's values (arithmetic, no outside source needed).
        var curve = new ChallengerCurve();
        const int pairs = 400_000;
        for (int n = 0; n < pairs; n++)
        {
            double step = n / 10_000;
            curve.Add(0.5 + step / 1_000, 0.4 + step / 1_000);
        }

        var points = curve.Points;
        Assert.InRange(points.Count, ChallengerCurve.MaxPoints / 2, ChallengerCurve.MaxPoints + 1);
        Assert.Equal(pairs, points[^1].Paired);
        Assert.All(points, p => Assert.Equal(-0.1, p.Challenger - p.Champion, 9));
        // The first point covers pairs inside the first step only.
        Assert.Equal(0.5, points[0].Champion, 12);
        Assert.True(points.Zip(points.Skip(1)).All(t => t.First.Paired < t.Second.Paired));
    }
}
