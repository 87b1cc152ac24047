namespace Driftline.Output;

/// <summary>
/// A plain text table for the terminal: columns padded to their widest cell and separated by
/// two spaces, numbers right-aligned, no box drawing, so it reads in any terminal, pastes into
/// an issue and stays easy to cut with <c>awk</c>.
/// </summary>
internal sealed class TextTable
{
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
        var widths = _header.Select((h, i) => _rows.Select(r => r[i].Length).Append(h.Length).Max()).ToArray();
        output.WriteLine(indent + Line(_header, widths));
        output.WriteLine(indent + string.Join("  ", widths.Select(w => new string('-', w))));
        foreach (var row in _rows)
        {
            output.WriteLine(indent + Line(row, widths));
        }
    }

    private string Line(string[] cells, int[] widths) =>
        string.Join("  ", cells.Select((c, i) => _right[i] ? c.PadLeft(widths[i]) : c.PadRight(widths[i]))).TrimEnd();
}
