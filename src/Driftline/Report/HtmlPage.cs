using System.Net;
using System.Text;

namespace Driftline.Report;

/// <summary>
/// A small builder for the report's HTML: escapes every piece of text it is given, so names
/// from configurations and events cannot break the page. The page is self-contained: one
/// inline style sheet, inline SVG, no scripts and nothing fetched.
/// </summary>
internal sealed class HtmlPage
{
    private const string Style = """
        :root { color-scheme: light; }
        body { font-family: "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; color: #222; background: #fafaf7;
               margin: 0; line-height: 1.5; font-size: 16px; }
        main { max-width: 940px; margin: 0 auto; padding: 28px 24px 64px; background: #fff; }
        h1 { font-size: 28px; margin: 0 0 4px; }
        h2 { font-size: 21px; margin: 40px 0 8px; padding-top: 12px; border-top: 1px solid #e3e3de; }
        h3 { font-size: 17px; margin: 24px 0 6px; }
        p.lead { color: #555; margin-top: 0; }
        figure { margin: 12px 0 20px; }
        figure svg { max-width: 100%; height: auto; display: block; border: 1px solid #ececec; }
        figcaption { font-size: 14px; color: #444; margin-top: 6px; max-width: 860px; }
        .row { display: flex; flex-wrap: wrap; gap: 12px; }
        .row figure { flex: 1 1 280px; max-width: 300px; }
        table { border-collapse: collapse; margin: 8px 0 16px; font-size: 14px; display: block; max-width: 100%; overflow-x: auto; }
        p.key a { color: inherit; margin-right: 18px; }
        th, td { padding: 5px 10px; border-bottom: 1px solid #e6e6e6; text-align: left; vertical-align: top; }
        th { background: #f2f2ee; font-weight: 600; }
        table.alerts { display: table; width: 100%; }
        table.alerts td:nth-child(-n+6) { white-space: nowrap; }
        table.alerts td:last-child { min-width: 360px; }
        .critical { color: #b03a2e; font-weight: 600; }
        .warning { color: #9a6400; font-weight: 600; }
        td.num { text-align: right; font-variant-numeric: tabular-nums; }
        .raised { color: #b03a2e; font-weight: 600; }
        .cleared { color: #1e8449; font-weight: 600; }
        .swatch { display: inline-block; width: 12px; height: 12px; border-radius: 2px; margin-right: 6px; vertical-align: -1px; }
        pre { background: #f5f5f2; padding: 10px 12px; font-size: 13px; white-space: pre-wrap; }
        """;

    private readonly StringBuilder _html = new();

    /// <summary>Starts a page titled <paramref name="title"/>.</summary>
    public HtmlPage(string title)
    {
        _html.Append("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
             .Append("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
             .Append("<title>").Append(Encode(title)).Append("</title>\n<style>\n").Append(Style).Append("</style>\n</head>\n<body>\n<main>\n");
    }

    /// <summary>HTML-escapes <paramref name="text"/>.</summary>
    public static string Encode(string? text) => WebUtility.HtmlEncode(text ?? "");

    /// <summary>Adds a heading of <paramref name="level"/> (1–3).</summary>
    public HtmlPage Heading(int level, string text, string? id = null)
    {
        _html.Append("<h").Append(level);
        if (id is not null)
        {
            _html.Append(" id=\"").Append(Encode(id)).Append('"');
        }
        _html.Append('>').Append(Encode(text)).Append("</h").Append(level).Append(">\n");
        return this;
    }

    /// <summary>Adds a paragraph of plain text.</summary>
    public HtmlPage Paragraph(string text, string? cssClass = null)
    {
        _html.Append(cssClass is null ? "<p>" : $"<p class=\"{cssClass}\">").Append(Encode(text)).Append("</p>\n");
        return this;
    }

    /// <summary>Adds trusted markup as is (only for markup this assembly built).</summary>
    public HtmlPage Raw(string markup)
    {
        _html.Append(markup).Append('\n');
        return this;
    }

    /// <summary>A figure: an inline SVG chart with its caption.</summary>
    public static string Figure(string svg, string caption) =>
        $"<figure>\n{svg}\n<figcaption>{Encode(caption)}</figcaption>\n</figure>";

    /// <summary>
    /// A table. Cells are escaped; a cell starting with <c>#</c> followed by a class name and a
    /// space (e.g. <c>"#num 0.52"</c>) gets that class, which is how numbers are right-aligned.
    /// </summary>
    public HtmlPage Table(IReadOnlyList<string> header, IEnumerable<IReadOnlyList<string>> rows, string? cssClass = null)
    {
        _html.Append(cssClass is null ? "<table>" : $"<table class=\"{Encode(cssClass)}\">").Append("\n<thead><tr>");
        foreach (var h in header)
        {
            _html.Append("<th>").Append(Encode(h)).Append("</th>");
        }
        _html.Append("</tr></thead>\n<tbody>\n");
        foreach (var row in rows)
        {
            _html.Append("<tr>");
            foreach (var cell in row)
            {
                if (cell.StartsWith('#') && cell.IndexOf(' ', StringComparison.Ordinal) is int space and > 1)
                {
                    _html.Append("<td class=\"").Append(Encode(cell[1..space])).Append("\">").Append(Encode(cell[(space + 1)..])).Append("</td>");
                }
                else
                {
                    _html.Append("<td>").Append(Encode(cell)).Append("</td>");
                }
            }
            _html.Append("</tr>\n");
        }
        _html.Append("</tbody>\n</table>\n");
        return this;
    }

    /// <summary>Closes the page and returns it.</summary>
    public override string ToString() => _html.ToString() + "</main>\n</body>\n</html>\n";
}
