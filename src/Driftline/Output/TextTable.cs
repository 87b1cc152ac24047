using Spectre.Console;
using Spectre.Console.Rendering;

namespace Driftline.Output;

/// <summary>
/// A plain text table for the terminal, rendered by Spectre.Console: columns sized to their
/// widest cell, numbers right-aligned, a rule under the header and no side borders, without
/// colour, so it reads in any terminal, pastes into an issue and stays easy to cut
/// with <c>awk</c>.
/// </summary>
internal sealed class TextTable
{
    // Wide enough that no feature name wraps; a table is never wider than its cells need.
    private const int Width = 240;

    private readonly string[] _header;
    private readonly bool[] _right;
    private readonly List<string[]> _rows = [];

    /// <summary>Creates a table; a column whose name starts with '&gt;' is right-aligned (the '&gt;' is not shown).</summary>
    public TextTable(params string[] header)
    {
        ArgumentNullException.ThrowIfNull(header);
        _right = header.Select(h => h.StartsWith('>')).ToArray();
        _header = header.Select(h => h.TrimStart('>')).ToArray();
    }

    /// <summary>Rows added so far.</summary>
    public int Count => _rows.Count;

    /// <summary>Adds a row; missing cells are blank, extra cells are an error.</summary>
    /// <exception cref="ArgumentException">More cells than columns.</exception>
    public void Add(params string[] cells)
    {
        ArgumentNullException.ThrowIfNull(cells);
        if (cells.Length > _header.Length)
        {
            throw new ArgumentException($"{cells.Length} cells for {_header.Length} columns", nameof(cells));
        }
        _rows.Add([.. cells, .. Enumerable.Repeat("", _header.Length - cells.Length)]);
    }

    /// <summary>Writes the header, a rule and the rows, each line indented by <paramref name="indent"/>.</summary>
    public void Write(TextWriter output, string indent = "")
    {
        ArgumentNullException.ThrowIfNull(output);
        var table = new Table().Border(TableBorder.Simple).HideRowSeparators();
        table.ShowHeaders = true;
        for (int i = 0; i < _header.Length; i++)
        {
            var column = new TableColumn(new Text(_header[i])) { Padding = new Padding(i == 0 ? 0 : 1, 0, 1, 0), NoWrap = true };
            table.AddColumn(_right[i] ? column.RightAligned() : column.LeftAligned());
        }
        foreach (var row in _rows)
        {
            table.AddRow(row.Select(c => (IRenderable)new Text(c)).ToArray());
        }
        using var text = new StringWriter(System.Globalization.CultureInfo.InvariantCulture);
        var console = AnsiConsole.Create(new AnsiConsoleSettings
        {
            Ansi = AnsiSupport.No,
            ColorSystem = ColorSystemSupport.NoColors,
            Interactive = InteractionSupport.No,
            Out = new AnsiConsoleOutput(text),
        });
        console.Profile.Width = Width;
        console.Write(table);
        foreach (var line in text.ToString().Split('\n'))
        {
            string trimmed = line.TrimEnd('\r', ' ');
            // Spectre's simple border frames the table with blank edge lines and a one-space
            // left edge; the header rule is what is kept of it.
            if (trimmed.Trim().Length > 0)
            {
                output.WriteLine(indent + (trimmed.StartsWith(' ') ? trimmed[1..] : trimmed));
            }
        }
    }
}
