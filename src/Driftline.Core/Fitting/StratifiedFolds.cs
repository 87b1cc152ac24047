namespace Driftline.Core.Fitting;

/// <summary>
/// Stratified k-fold assignment: every fold holds each class in (nearly) the proportion of the
/// whole data, so no held-out fold lacks a class and the folds' figures are comparable
/// (Kohavi 1995, "A study of cross-validation and bootstrap for accuracy estimation and model
/// selection", IJCAI).
/// </summary>
internal static class StratifiedFolds
{
    /// <summary>
    /// The fold of each row. Each class's rows are shuffled and dealt to the folds in turn,
    /// the deal continuing from class to class, so every fold's count of a class differs from
    /// another's by at most one, and fold sizes differ by at most one.
    /// </summary>
    /// <param name="labels">The class of each row (any non-negative integers).</param>
    /// <param name="folds">The number of folds, from 2 to the number of rows.</param>
    /// <param name="random">The shuffle's source; the same seed gives the same folds.</param>
    /// <returns>One fold index in [0, folds) per row.</returns>
    /// <exception cref="ArgumentOutOfRangeException">Fewer than 2 folds, or more folds than rows.</exception>
    public static int[] Assign(IReadOnlyList<int> labels, int folds, Random random)
    {
        ArgumentNullException.ThrowIfNull(labels);
        ArgumentNullException.ThrowIfNull(random);
        ArgumentOutOfRangeException.ThrowIfLessThan(folds, 2);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(folds, labels.Count);
        var assignment = new int[labels.Count];
        int next = 0;
        foreach (var group in Enumerable.Range(0, labels.Count).GroupBy(i => labels[i]).OrderBy(g => g.Key))
        {
            int[] rows = group.ToArray();
            random.Shuffle(rows);
            foreach (int row in rows)
            {
                assignment[row] = next;
                next = (next + 1) % folds;
            }
        }

        return assignment;
    }
}
