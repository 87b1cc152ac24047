using System.Globalization;
using System.Reflection;
using System.Text.Json;

namespace Driftline.Core.Tests;

/// <summary>
/// Reads reference files embedded from the test project's <c>Reference/</c> folder. Each is
/// embedded under its path below that folder (for <c>Reference/spector.csv</c>, the name
/// <c>spector.csv</c>), so tests need no working directory or copied output files.
/// </summary>
internal static class ReferenceData
{
    private static readonly Assembly Assembly = typeof(ReferenceData).Assembly;

    /// <summary>Opens an embedded file as UTF-8 text.</summary>
    /// <param name="name">The file's path below <c>Reference/</c>, such as <c>spector.csv</c>.</param>
    /// <exception cref="FileNotFoundException">No such resource; the message lists the ones there are.</exception>
    public static TextReader OpenText(string name)
    {
        ArgumentException.ThrowIfNullOrEmpty(name);
        Stream stream = Assembly.GetManifestResourceStream(name)
            ?? throw new FileNotFoundException(
                $"No embedded reference file '{name}'. Embedded: {string.Join(", ", Assembly.GetManifestResourceNames().Order(StringComparer.Ordinal))}. " +
                "Put the file under tests/Driftline.Core.Tests/Reference/.",
                name);
        return new StreamReader(stream, System.Text.Encoding.UTF8);
    }

    /// <summary>Reads a whole embedded file as text.</summary>
    /// <param name="name">The file's path below <c>Reference/</c>.</param>
    public static string ReadText(string name)
    {
        using TextReader reader = OpenText(name);
        return reader.ReadToEnd();
    }

    /// <summary>Parses an embedded JSON file; the element stays valid after the call.</summary>
    /// <param name="name">The file's path below <c>Reference/</c>, such as <c>fits.json</c>.</param>
    public static JsonElement ReadJson(string name)
    {
        using var document = JsonDocument.Parse(ReadText(name));
        return document.RootElement.Clone();
    }

    /// <summary>
    /// Reads an embedded numeric CSV: a header line of column names, then rows of numbers
    /// separated by commas (invariant culture; no quoting; blank lines skipped).
    /// </summary>
    /// <param name="name">The file's path below <c>Reference/</c>, such as <c>anes96.csv</c>.</param>
    /// <exception cref="FormatException">A row has the wrong number of cells or a cell is not a number; the message gives the line.</exception>
    public static ReferenceTable ReadCsv(string name)
    {
        using TextReader reader = OpenText(name);
        string header = reader.ReadLine() ?? throw new FormatException($"{name} is empty; expected a header line.");
        string[] columns = header.Split(',', StringSplitOptions.TrimEntries);
        var rows = new List<double[]>();
        int lineNumber = 1;
        for (string? line = reader.ReadLine(); line is not null; line = reader.ReadLine())
        {
            lineNumber++;
            if (line.Length == 0)
            {
                continue;
            }

            string[] cells = line.Split(',', StringSplitOptions.TrimEntries);
            if (cells.Length != columns.Length)
            {
                throw new FormatException($"{name} line {lineNumber} has {cells.Length} cells; the header has {columns.Length}.");
            }

            var row = new double[cells.Length];
            for (int j = 0; j < cells.Length; j++)
            {
                if (!double.TryParse(cells[j], NumberStyles.Float, CultureInfo.InvariantCulture, out row[j]))
                {
                    throw new FormatException($"{name} line {lineNumber} column '{columns[j]}' is '{cells[j]}', not a number.");
                }
            }

            rows.Add(row);
        }

        return new ReferenceTable(columns, rows);
    }
}
