using System.Text.RegularExpressions;
using Driftline.Report;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Report;

/// <summary>The report file a replay writes: self-contained, with every section the issue asks for.</summary>
public sealed class ReportFileTests(DemoReplay replay) : IClassFixture<DemoReplay>
{
    private string Html => File.ReadAllText(Path.Combine(replay.Output, ReportWriter.FileName));

    [Fact]
    public void Replay_DemoStream_WritesReportWithoutScriptsOrFetches()
    {
        string html = Html;
        Assert.DoesNotContain("<script", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("<link", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotMatch(new Regex("(src|href)=\"(https?:)?//", RegexOptions.IgnoreCase), html);
        Assert.DoesNotContain("@import", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_DemoStream_ReportHasEverySection()
    {
        string html = Html;
        foreach (var id in new[] { "summary", "loss", "calibration", "reliability", "alerts", "labels", "settings" })
        {
            Assert.Contains($"id=\"{id}\"", html, StringComparison.Ordinal);
        }
        Assert.Contains("class-prior baseline", html, StringComparison.Ordinal);
        Assert.Contains("Raised: the gap between mean predicted probability", html, StringComparison.Ordinal);
        // The demo's storm raises an alert, so its before/when/after diagrams are drawn.
        Assert.Contains("what the rule saw", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_DemoStream_ChartsAreInlineSvgWithUniqueIds()
    {
        string html = Html;
        int charts = Regex.Matches(html, "<svg ").Count;
        Assert.True(charts >= 6, $"{charts} charts");
        Assert.DoesNotContain("<?xml", html, StringComparison.Ordinal);
        var ids = Regex.Matches(html, "id=\"([^\"]+)\"").Select(m => m.Groups[1].Value).ToList();
        Assert.Equal(ids.Count, ids.Distinct().Count());
    }
}
