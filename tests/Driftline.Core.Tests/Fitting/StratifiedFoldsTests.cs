using Driftline.Core.Fitting;
using Xunit;

namespace Driftline.Core.Tests.Fitting;

/// <summary>Stratified folds (common practice: each fold keeps the classes' proportions).</summary>
public sealed class StratifiedFoldsTests
{
    private static readonly int[] Labels = Enumerable.Range(0, 103).Select(i => i % 7 == 0 ? 2 : i % 3 == 0 ? 1 : 0).ToArray();

    [Fact]
    public void Assign_FiveFolds_EachClassAndEachFoldDifferByAtMostOne()
    {
        int[] folds = StratifiedFolds.Assign(Labels, 5, new Random(3));

        Assert.All(folds, f => Assert.InRange(f, 0, 4));
        var sizes = Enumerable.Range(0, 5).Select(f => folds.Count(x => x == f)).ToArray();
        Assert.True(sizes.Max() - sizes.Min() <= 1, string.Join(",", sizes));
        foreach (int label in Labels.Distinct())
        {
            var counts = Enumerable.Range(0, 5).Select(f => Labels.Where((y, i) => y == label && folds[i] == f).Count()).ToArray();
            Assert.True(counts.Max() - counts.Min() <= 1, $"class {label}: {string.Join(",", counts)}");
        }
    }

    [Fact]
    public void Assignments_SameSeed_SameFolds_AndRepeatsDiffer()
    {
        int[][] first = CrossValidation.Assignments(Labels, 4, 3, 11);
        int[][] again = CrossValidation.Assignments(Labels, 4, 3, 11);

        Assert.Equal(first, again);
        Assert.NotEqual(first[0], first[1]);
    }
}
