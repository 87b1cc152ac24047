namespace Driftline.Core.Fitting;

/// <summary>
/// Finds the one-hot groups of a design that are collinear with the intercept and picks one
/// reference level in each to leave out (treatment coding, common practice in regression:
/// McCullagh &amp; Nelder 1989, Generalized Linear Models, 2nd ed., §3.4). A categorical
/// feature that every row carries exactly once has level columns summing to the intercept's
/// column of ones, so without a reference level its coefficients are not identified.
/// </summary>
/// <remarks>
/// A group whose rows can carry no level (a missing value) or several (a bag such as tags) is
/// not collinear by construction and keeps every level. The most frequent level becomes the
/// reference, so the remaining coefficients are contrasts against the best-measured level and
/// their standard errors are the smallest treatment coding allows.
/// </remarks>
internal static class ReferenceLevels
{
    /// <summary>
    /// The columns to leave out: one per group whose levels cover every row exactly once.
    /// </summary>
    /// <param name="design">Dense rows, one value per column (no intercept column).</param>
    /// <param name="groupOfColumn">Per column, the name of the categorical it is a level of, or null for a numeric column (or one whose group is unknown).</param>
    /// <returns>The left-out columns in increasing order; empty when no group is complete.</returns>
    /// <exception cref="ArgumentException">A row's length differs from the number of groups given.</exception>
    public static IReadOnlyList<int> Choose(IReadOnlyList<double[]> design, IReadOnlyList<string?> groupOfColumn)
    {
        ArgumentNullException.ThrowIfNull(design);
        ArgumentNullException.ThrowIfNull(groupOfColumn);
        var groups = new Dictionary<string, List<int>>(StringComparer.Ordinal);
        for (int c = 0; c < groupOfColumn.Count; c++)
        {
            if (groupOfColumn[c] is { } g)
            {
                if (!groups.TryGetValue(g, out var list))
                {
                    groups[g] = list = [];
                }
                list.Add(c);
            }
        }

        var dropped = new List<int>();
        foreach (var columns in groups.Values)
        {
            var counts = new long[columns.Count];
            bool complete = design.Count > 0;
            for (int i = 0; i < design.Count && complete; i++)
            {
                double[] row = design[i];
                if (row.Length != groupOfColumn.Count)
                {
                    throw new ArgumentException($"Row {i} has {row.Length} values for {groupOfColumn.Count} columns.", nameof(design));
                }

                int present = -1;
                for (int k = 0; k < columns.Count; k++)
                {
                    if (row[columns[k]] == 0)
                    {
                        continue;
                    }

                    // Two levels in one row (a bag) or a second nonzero: not a one-hot group.
                    complete = present < 0;
                    present = k;
                }

                complete &= present >= 0;
                if (complete)
                {
                    counts[present]++;
                }
            }

            if (complete)
            {
                int reference = 0;
                for (int k = 1; k < columns.Count; k++)
                {
                    if (counts[k] > counts[reference])
                    {
                        reference = k;
                    }
                }

                dropped.Add(columns[reference]);
            }
        }

        dropped.Sort();
        return dropped;
    }
}
