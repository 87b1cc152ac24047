using System.Text.Json;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>Vector scaling end to end on the multiclass demo: replay and monitor write served and raw class probabilities (issue 11).</summary>
public sealed class MulticlassRecalibrationReplayTests
{
    private static readonly string[] Classes = ["on-time", "late", "failed", "cancelled"];

    [Fact]
    public async Task ReplayThenMonitor_RecalibrationAlways_ServedAndRawClassObjectsAndServedMeasures()
    {
        using var dir = new TempFolder();
        string demo = dir.File("outcomes.jsonl");
        string config = dir.File("recalibrated.json");
        File.WriteAllText(config, """{"Model":{"Classes":["on-time","late","failed","cancelled"]},"Recalibration":{"Mode":"Always"}}""");
        Assert.Equal(0, (await CliRun.RunAsync("demo", "--classes", "--orders", "8000", "--out", demo)).ExitCode);

        var run = await CliRun.RunAsync("replay", demo, "--out", dir.File("out"), "--config", config);

        Assert.True(run.ExitCode == 0, run.Error);
        var last = JsonDocument.Parse(File.ReadLines(dir.File("out/predictions.jsonl")).Last()).RootElement;
        Assert.Equal(Classes, last.GetProperty("p").EnumerateObject().Select(c => c.Name));
        Assert.Equal(Classes, last.GetProperty("p_raw").EnumerateObject().Select(c => c.Name));
        Assert.Equal(1.0, last.GetProperty("p").EnumerateObject().Sum(c => c.Value.GetDouble()), 9);
        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json"))).RootElement;
        var served = summary.GetProperty("served");
        Assert.InRange(served.GetProperty("brier").GetDouble(), 0, 2);
        Assert.True(served.GetProperty("log_loss").GetDouble() > 0);
        var fitted = served.GetProperty("recalibration")[0].GetProperty("classes");
        Assert.Equal(Classes, fitted.EnumerateArray().Select(c => c.GetProperty("class").GetString()));
        var metrics = File.ReadAllLines(dir.File("out/metrics.csv"));
        Assert.EndsWith(",served_log_loss,served_brier,served_ece,served_calibration_in_the_large", metrics[0], StringComparison.Ordinal);
        Assert.Equal(metrics[0].Split(',').Length, metrics[^1].Split(',').Length);
        Assert.Contains("vector scaling of", File.ReadAllText(dir.File("out/report.html")), StringComparison.Ordinal);

        // The replay's raw class probabilities as an external model's, with their labels: monitor
        // serves the corrected stream of a model it does not own.
        var labels = File.ReadLines(demo).Select(l => JsonDocument.Parse(l).RootElement)
            .Where(e => e.TryGetProperty("label", out var y) && y.ValueKind == JsonValueKind.String)
            .GroupBy(e => e.GetProperty("id").GetString()!).ToDictionary(g => g.Key, g => g.First().GetProperty("label").GetString()!);
        var audit = File.ReadLines(dir.File("out/predictions.jsonl")).Select(l => JsonDocument.Parse(l).RootElement)
            .Where(e => labels.ContainsKey(e.GetProperty("id").GetString()!))
            .Select(e => $"{{\"id\":\"{e.GetProperty("id").GetString()}\",\"p\":{e.GetProperty("p_raw").GetRawText()},\"label\":\"{labels[e.GetProperty("id").GetString()!]}\"}}")
            .ToList();
        File.WriteAllLines(dir.File("audit.jsonl"), audit);

        var monitor = await CliRun.RunAsync("monitor", dir.File("audit.jsonl"), "--out", dir.File("mon"), "--config", config);

        Assert.True(monitor.ExitCode == 0, monitor.Error);
        var written = File.ReadAllLines(dir.File("mon/predictions.jsonl"));
        Assert.Equal(audit.Count, written.Length);
        Assert.All(written.Take(50), l => Assert.Contains("\"p_raw\":{", l, StringComparison.Ordinal));
        Assert.True(JsonDocument.Parse(File.ReadAllText(dir.File("mon/summary.json"))).RootElement.TryGetProperty("served", out _));
    }
}
