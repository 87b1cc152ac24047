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

    [Fact]
    public void Replay_DemoStream_DrawsEachRuleWithItsOwnThresholds()
    {
        string html = Html;
        Assert.Contains("id=\"rules\"", html, StringComparison.Ordinal);
        // The gap rule's own raise and clear lines (its defaults), and the sequential test's
        // evidence against its threshold ln(10^6 x 13) = 16.38.
        Assert.Contains("raise at 0.06", html, StringComparison.Ordinal);
        Assert.Contains("clear at 0.03", html, StringComparison.Ordinal);
        Assert.Contains("raise at 16.3805", html, StringComparison.Ordinal);
        Assert.Contains("alert open", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_DemoStream_AlertTableHasSeverityAndMarksNameTheRule()
    {
        string html = Html;
        Assert.Contains("<th>severity</th>", html, StringComparison.Ordinal);
        Assert.Contains("<td class=\"critical\">critical</td>", html, StringComparison.Ordinal);
        Assert.Contains("<td class=\"warning\">warning</td>", html, StringComparison.Ordinal);
        Assert.Contains("critical raised", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_DemoStream_HasRankingChartDistributionsAndEventTimeAxis()
    {
        string html = Html;
        Assert.Contains("id=\"ranking\"", html, StringComparison.Ordinal);
        Assert.Contains("AUC (higher ranks better", html, StringComparison.Ordinal);
        Assert.Contains("labels per probability bin, before, when and after the raise", html, StringComparison.Ordinal);
        // The demo's events carry times from 2026-03-02: the x axis shows them under the label counts.
        Assert.Contains("labels graded, and the event time then (UTC)", html, StringComparison.Ordinal);
        Assert.Matches(new Regex(@">\s*03-0[2-9] [0-2][0-9]:[0-5][0-9]\s*<"), html);
    }

    [Fact]
    public async Task Replay_SegmentByZone_ReportListsSegments()
    {
        using var folder = new TempFolder();
        string config = folder.File("segments.json");
        File.WriteAllText(config, """{"Monitor":{"SegmentBy":"zone"}}""");
        var run = await TestCli.RunAsync("replay", replay.Input, "--config", config, "--out", folder.File("out"));
        Assert.True(run.Code == 0, run.Error);

        string html = File.ReadAllText(Path.Combine(folder.File("out"), ReportWriter.FileName));
        Assert.Contains("id=\"segments\"", html, StringComparison.Ordinal);
        Assert.Contains("Segments by zone", html, StringComparison.Ordinal);
        // Every demo zone has its row (the demo's zones are listed in DemoScenario).
        Assert.Contains("<td>riverside</td>", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Replay_NoSegmentBy_NoSegmentsSection() =>
        Assert.DoesNotContain("id=\"segments\"", Html, StringComparison.Ordinal);
}
