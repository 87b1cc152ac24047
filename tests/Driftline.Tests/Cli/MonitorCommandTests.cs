using System.Globalization;
using System.Text;
using System.Text.Json;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

public sealed class MonitorCommandTests
{
    // An external model's probabilities: calibrated for the first 20,000 labels, then the
    // true log-odds shift by +1 (the model under-predicts). Invented test data, seeded.
    private static string Stream(int n = 30_000, int breakAt = 20_000)
    {
        var random = new Random(3);
        var c = CultureInfo.InvariantCulture;
        var sb = new StringBuilder();
        var late = new Queue<string>();
        for (int i = 0; i < n; i++)
        {
            double p = 1 / (1 + Math.Exp(-(random.NextDouble() * 4 - 2.5)));
            double logit = Math.Log(p / (1 - p)) + (i >= breakAt ? 1.0 : 0);
            int y = random.NextDouble() < 1 / (1 + Math.Exp(-logit)) ? 1 : 0;
            if (i % 4 == 0)
            {
                sb.Append(c, $"{{\"id\":\"x{i}\",\"p\":{p:R}}}\n");
                late.Enqueue($"{{\"id\":\"x{i}\",\"label\":{y}}}\n");
            }
            else
            {
                sb.Append(c, $"{{\"id\":\"x{i}\",\"p\":{p:R},\"label\":{y}}}\n");
            }
            if (late.Count > 10)
            {
                sb.Append(late.Dequeue());
            }
        }
        while (late.Count > 0)
        {
            sb.Append(late.Dequeue());
        }
        sb.Append("{\"id\":\"bad-1\",\"p\":1.7,\"label\":1}\n");
        sb.Append("{\"id\":\"bad-2\",\"features\":{\"zone\":\"harbour\"},\"label\":1}\n");
        return sb.ToString();
    }

    [Fact]
    public async Task Monitor_ExternalProbabilities_QuietUntilTheBreakThenRaised()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("scores.jsonl"), Stream());
        var run = await CliRun.RunAsync("monitor", dir.File("scores.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);

        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json"))).RootElement;
        Assert.Equal(30_000, summary.GetProperty("probabilities").GetInt64());
        Assert.Equal(30_000, summary.GetProperty("labels").GetInt64());
        Assert.Equal(7_500, summary.GetProperty("late_labels").GetInt64());
        Assert.Equal(2, summary.GetProperty("dead_letters").GetInt64());

        var alerts = File.ReadAllLines(dir.File("out/alerts.jsonl")).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        // Nothing before the break; both calibration rules raised within 1,000 labels after it,
        // and the sequential test names the break's direction.
        Assert.All(alerts, a => Assert.True(a.GetProperty("labels").GetInt64() >= 20_000));
        foreach (var rule in new[] { "calibration-gap", "calibration-drift" })
        {
            var raised = alerts.First(a => a.GetProperty("rule").GetString() == rule && a.GetProperty("state").GetString() == "raised");
            Assert.InRange(raised.GetProperty("labels").GetInt64(), 20_000, 21_000);
        }
        var drift = alerts.First(a => a.GetProperty("rule").GetString() == "calibration-drift");
        Assert.Equal("critical", drift.GetProperty("severity").GetString());
        Assert.Contains("under-predicting", drift.GetProperty("break").GetString(), StringComparison.Ordinal);

        var dead = File.ReadAllText(dir.File("out/dead-letters.jsonl"));
        Assert.Contains("p must be a finite number between 0 and 1", dead, StringComparison.Ordinal);
        Assert.Contains("monitor mode needs a probability", dead, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("out/model.json")));
        Assert.True(File.Exists(dir.File("out/report.html")));
    }

    [Fact]
    public async Task Monitor_BreakInOneSegment_NamesThatSegmentFirst()
    {
        // Four zones, calibrated; after label 20,000 the harbour's outcomes run +1.5 in log-odds.
        var random = new Random(6);
        var c = CultureInfo.InvariantCulture;
        string[] zones = ["riverside", "harbour", "old-town", "hillside"];
        var sb = new StringBuilder();
        for (int i = 0; i < 30_000; i++)
        {
            string zone = zones[i % 4];
            double p = 1 / (1 + Math.Exp(-(random.NextDouble() * 4 - 2.5)));
            double shift = i >= 20_000 && zone == "harbour" ? 1.5 : 0;
            int y = random.NextDouble() < 1 / (1 + Math.Exp(-(Math.Log(p / (1 - p)) + shift))) ? 1 : 0;
            sb.Append(c, $"{{\"id\":\"x{i}\",\"p\":{p:R},\"label\":{y},\"features\":{{\"zone\":\"{zone}\"}}}}\n");
        }
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("scores.jsonl"), sb.ToString());
        File.WriteAllText(dir.File("segments.json"), """{"Monitor":{"SegmentBy":"zone"}}""");
        var run = await CliRun.RunAsync("monitor", dir.File("scores.jsonl"), "--out", dir.File("out"), "--config", dir.File("segments.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        var raised = File.ReadAllLines(dir.File("out/alerts.jsonl")).Select(l => JsonDocument.Parse(l).RootElement)
            .First(a => a.GetProperty("state").GetString() == "raised");
        Assert.True(raised.GetProperty("labels").GetInt64() >= 20_000);
        var worst = raised.GetProperty("window_state").GetProperty("worst_segments");
        Assert.Equal("harbour", worst[0].GetProperty("segment").GetString());
        Assert.True(worst[0].GetProperty("z").GetDouble() < 0);
        Assert.Contains("Segments furthest off: harbour", raised.GetProperty("message").GetString(), StringComparison.Ordinal);
    }
}
