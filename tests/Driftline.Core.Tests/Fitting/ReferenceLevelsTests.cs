using System.Text.Json;
using Driftline.Core.Fitting;
using Xunit;

namespace Driftline.Core.Tests.Fitting;

/// <summary>Reference levels: one level per complete one-hot group is left out, so the fit is identified.</summary>
public sealed class ReferenceLevelsTests
{
    [Fact]
    public void Choose_CompleteOneHotGroups_LeavesOutTheMostFrequentLevelOfEach()
    {
        // zone: a, b, b, c (b most frequent); hour: 1, 2, 2, 1 (tie: the first level); x numeric.
        double[][] design =
        [
            [1, 0, 0, 1, 0, 0.3],
            [0, 1, 0, 0, 1, 1.2],
            [0, 1, 0, 0, 1, -0.4],
            [0, 0, 1, 1, 0, 2.0],
        ];
        string?[] groups = ["zone", "zone", "zone", "hour", "hour", null];

        Assert.Equal([1, 3], ReferenceLevels.Choose(design, groups));
    }

    [Fact]
    public void Choose_GroupWithAMissingValueOrABag_KeepsEveryLevel()
    {
        // "zone" is missing in row 2; "tags" carries two levels in row 0: neither sums to the intercept.
        double[][] design =
        [
            [1, 0, 1, 1],
            [0, 1, 1, 0],
            [0, 0, 0, 1],
        ];
        string?[] groups = ["zone", "zone", "tags", "tags"];

        Assert.Empty(ReferenceLevels.Choose(design, groups));
    }

    [Fact]
    public void Fit_OneHotPsiWithItsReferenceLeftOut_ReproducesTheSpectorFit()
    {
        // PSI one-hot coded as psi=1 and psi=0: with the intercept the two columns are collinear.
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        double[][] oneHot = table.Rows.Select(r => new[] { r[0], r[1], r[2], 1 - r[2] }).ToArray();
        string?[] groups = [null, null, "PSI", "PSI"];
        string[] names = ["GPA", "TUCE", "PSI=1", "PSI=0"];
        LogisticFitResult collinear = LogisticNewtonFit.Fit(oneHot, table.Column("label"), featureNames: names);
        Assert.False(collinear.Converged);
        Assert.Contains("'PSI=0' is constant or a linear combination", collinear.Problem, StringComparison.Ordinal);

        IReadOnlyList<int> dropped = ReferenceLevels.Choose(oneHot, groups);

        // 18 of the 32 students had PSI 0, the more frequent level: it becomes the reference.
        Assert.Equal([3], dropped);
        double[][] reduced = oneHot.Select(r => r[..3]).ToArray();
        LogisticFitResult fit = LogisticNewtonFit.Fit(reduced, table.Column("label"));
        // Source: statsmodels Logit on the same data with PSI as 0/1 (fits.json "spector"):
        // treatment coding with PSI=0 as reference is exactly that design.
        JsonElement spector = ReferenceData.ReadJson("fits.json").GetProperty("spector");
        Assert.True(fit.Converged, fit.Problem);
        Assert.Equal(spector.GetProperty("intercept").GetDouble(), fit.Intercept, 1e-8);
        Assert.Equal(spector.GetProperty("coefficients").GetProperty("PSI").GetDouble(), fit.Coefficients[2], 1e-8);
    }
}
