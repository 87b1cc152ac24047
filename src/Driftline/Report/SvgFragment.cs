using System.Text.RegularExpressions;

namespace Driftline.Report;

/// <summary>Turns a chart's standalone SVG document into a fragment that can sit inline in an HTML page beside others.</summary>
internal static partial class SvgFragment
{
    /// <summary>
    /// Drops the XML declaration, adds a viewBox so the chart scales with the page, and
    /// prefixes every id (and its references) with <paramref name="idPrefix"/>: each chart
    /// numbers its clip paths from the same start, and without a prefix every chart in the
    /// page would clip to the first chart's rectangles.
    /// </summary>
    public static string Inline(string svgDocument, string idPrefix, string title)
    {
        ArgumentNullException.ThrowIfNull(svgDocument);
        string svg = XmlDeclaration().Replace(svgDocument, "");
        svg = IdAttribute().Replace(svg, m => $"id=\"{idPrefix}{m.Groups[1].Value}\"");
        svg = svg.Replace("url(#", $"url(#{idPrefix}", StringComparison.Ordinal)
                 .Replace("href=\"#", $"href=\"#{idPrefix}", StringComparison.Ordinal);
        svg = SvgOpen().Replace(svg, m =>
            $"<svg{m.Groups[1].Value} width=\"{m.Groups[2].Value}\" height=\"{m.Groups[3].Value}\" viewBox=\"0 0 {m.Groups[2].Value} {m.Groups[3].Value}\" role=\"img\" aria-label=\"{System.Net.WebUtility.HtmlEncode(title)}\"", 1);
        return svg.Trim();
    }

    [GeneratedRegex(@"<\?xml[^>]*\?>\s*")]
    private static partial Regex XmlDeclaration();

    [GeneratedRegex("id=\"([^\"]+)\"")]
    private static partial Regex IdAttribute();

    [GeneratedRegex("<svg([^>]*?) width=\"(\\d+)\" height=\"(\\d+)\"")]
    private static partial Regex SvgOpen();
}
