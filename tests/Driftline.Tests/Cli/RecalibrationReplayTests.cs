using System.Text.Json;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>Recalibration end to end: replay and monitor with <c>Recalibration:Mode</c> set write the served and the raw probability.</summary>
public sealed class RecalibrationReplayTests(DemoReplay demo) : IClassFixture<DemoReplay>
{
    [Fact]
    public async Task Replay_RecalibrationAlways_PredictionsCarryServedAndRaw()
    {
        using var folder = new TempFolder();
        string config = folder.File("recalibrated.json");
        File.WriteAllText(config, """{"Recalibration":{"Mode":"Always"}}""");
        var run = await TestCli.RunAsync("replay", demo.Input, "--config", config, "--out", folder.File("out"));
        Assert.True(run.Code == 0, run.Error);

        var lines = File.ReadLines(Path.Combine(folder.File("out"), "predictions.jsonl")).ToList();
        using var first = JsonDocument.Parse(lines[^1]);
        Assert.True(first.RootElement.TryGetProperty("p_raw", out _), lines[^1]);
        using var summary = JsonDocument.Parse(File.ReadAllText(Path.Combine(folder.File("out"), "summary.json")));
        var served = summary.RootElement.GetProperty("served");
        Assert.True(served.GetProperty("log_loss").GetDouble() > 0);
        Assert.Equal(1, served.GetProperty("recalibration").GetArrayLength());
        var metrics = File.ReadAllLines(Path.Combine(folder.File("out"), "metrics.csv"));
        Assert.EndsWith(",served_log_loss,served_brier,served_ece,served_calibration_in_the_large", metrics[0], StringComparison.Ordinal);
        Assert.Equal(metrics[0].Split(',').Length, metrics[^1].Split(',').Length);
        Assert.Contains("served (recalibrated)", File.ReadAllText(Path.Combine(folder.File("out"), "report.html")), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_RecalibrationOff_PredictionsAsBefore()
    {
        var lines = File.ReadLines(Path.Combine(demo.Output, "predictions.jsonl")).Take(100);
        Assert.All(lines, l => Assert.DoesNotContain("p_raw", l, StringComparison.Ordinal));
        using var summary = JsonDocument.Parse(await File.ReadAllTextAsync(Path.Combine(demo.Output, "summary.json"), TestContext.Current.CancellationToken));
        Assert.False(summary.RootElement.TryGetProperty("served", out _));
    }

    [Fact]
    public async Task Monitor_RecalibrationAlways_WritesTheCorrectedStream()
    {
        using var folder = new TempFolder();
        // An external model's probabilities: the replay's own predictions, with their labels.
        var labels = File.ReadLines(demo.Input).Where(l => l.Contains("\"label\"", StringComparison.Ordinal))
            .Select(l => JsonDocument.Parse(l).RootElement)
            .Where(e => e.TryGetProperty("label", out var y) && y.ValueKind == JsonValueKind.Number)
            .ToDictionary(e => e.GetProperty("id").GetString()!, e => e.GetProperty("label").GetInt32());
        var audit = File.ReadLines(Path.Combine(demo.Output, "predictions.jsonl"))
            .Select(l => JsonDocument.Parse(l).RootElement)
            .Where(e => labels.ContainsKey(e.GetProperty("id").GetString()!))
            .Select(e => $"{{\"id\":\"{e.GetProperty("id").GetString()}\",\"p\":{e.GetProperty("p").GetRawText()},\"label\":{labels[e.GetProperty("id").GetString()!]}}}")
            .ToList();
        File.WriteAllLines(folder.File("audit.jsonl"), audit);
        string config = folder.File("recalibrated.json");
        File.WriteAllText(config, """{"Recalibration":{"Mode":"Always"}}""");

        var run = await TestCli.RunAsync("monitor", folder.File("audit.jsonl"), "--config", config, "--out", folder.File("out"));

        Assert.True(run.Code == 0, run.Error);
        var written = File.ReadAllLines(Path.Combine(folder.File("out"), "predictions.jsonl"));
        Assert.Equal(audit.Count, written.Length);
        Assert.All(written.Take(50), l => Assert.Contains("\"p_raw\":", l, StringComparison.Ordinal));
    }
}
