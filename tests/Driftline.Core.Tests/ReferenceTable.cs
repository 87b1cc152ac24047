namespace Driftline.Core.Tests;

/// <summary>A numeric table read by <see cref="ReferenceData.ReadCsv"/>: column names and rows.</summary>
/// <param name="Header">The column names, in file order.</param>
/// <param name="Rows">The rows, each with one value per column.</param>
internal sealed record ReferenceTable(IReadOnlyList<string> Header, IReadOnlyList<double[]> Rows)
{
    /// <summary>The position of a column.</summary>
    /// <exception cref="ArgumentException">No column has that name.</exception>
    public int IndexOf(string column)
    {
        for (int j = 0; j < Header.Count; j++)
        {
            if (string.Equals(Header[j], column, StringComparison.Ordinal))
            {
                return j;
            }
        }

        throw new ArgumentException($"No column '{column}'; the columns are {string.Join(", ", Header)}.", nameof(column));
    }

    /// <summary>One column's values, in row order.</summary>
    public double[] Column(string column)
    {
        int index = IndexOf(column);
        return Rows.Select(row => row[index]).ToArray();
    }

    /// <summary>The named columns of every row, in the order given: a design matrix as rows.</summary>
    public double[][] Columns(params IReadOnlyList<string> columns)
    {
        int[] indexes = columns.Select(IndexOf).ToArray();
        return Rows.Select(row => indexes.Select(j => row[j]).ToArray()).ToArray();
    }
}
