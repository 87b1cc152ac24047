using System.Text.Json;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>The multiclass demo end to end: replay, outputs, warm start and monitor (issue 10).</summary>
public sealed class MulticlassReplayTests
{
    private static readonly string[] Classes = ["on-time", "late", "failed", "cancelled"];

    [Fact]
    public async Task Replay_MulticlassDemo_WritesClassProbabilitiesMeasuresAndClassAlerts()
    {
        using var dir = new TempFolder();
        string demo = dir.File("outcomes.jsonl");
        string config = Path.Combine(TestCli.RepositoryRoot(), "config", "delivery-outcomes.json");
        Assert.Equal(0, (await CliRun.RunAsync("demo", "--classes", "--orders", "20000", "--out", demo)).ExitCode);
        File.AppendAllLines(demo, ["""{"id":"d-100001","label":"lost"}"""]);
        var run = await CliRun.RunAsync("replay", demo, "--out", dir.File("out"), "--config", config);
        Assert.True(run.ExitCode == 0, run.Error);

        var first = JsonDocument.Parse(File.ReadLines(dir.File("out/predictions.jsonl")).First()).RootElement.GetProperty("p");
        Assert.Equal(Classes, first.EnumerateObject().Select(c => c.Name));
        Assert.All(first.EnumerateObject(), c => Assert.Equal(0.25, c.Value.GetDouble()));

        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json"))).RootElement;
        Assert.True(summary.GetProperty("log_loss").GetDouble() < summary.GetProperty("prior_log_loss").GetDouble());
        Assert.InRange(summary.GetProperty("brier").GetDouble(), 0, 2);
        Assert.Equal(Classes, summary.GetProperty("classes").EnumerateArray().Select(c => c.GetProperty("class").GetString()));
        Assert.True(summary.TryGetProperty("classwise_ece", out _));
        Assert.Equal(1, summary.GetProperty("dead_letters").GetInt64());
        var dead = JsonDocument.Parse(File.ReadAllLines(dir.File("out/dead-letters.jsonl")).Single()).RootElement;
        Assert.StartsWith("label 'lost' names no class in Model:Classes", dead.GetProperty("reason").GetString(), StringComparison.Ordinal);

        var header = File.ReadLines(dir.File("out/metrics.csv")).First();
        Assert.EndsWith(",classwise_ece,mean_p:on-time,observed:on-time,mean_p:late,observed:late,mean_p:failed,observed:failed,mean_p:cancelled,observed:cancelled", header, StringComparison.Ordinal);

        // The storm (from delivery 11,000, about label 10,800) under-predicts 'late': nothing is
        // raised before it, and an alert naming 'late' is raised soon after it starts.
        var alerts = File.ReadAllLines(dir.File("out/alerts.jsonl")).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        var raised = alerts.Where(a => a.GetProperty("state").GetString() == "raised").ToList();
        Assert.InRange(raised[0].GetProperty("labels").GetInt64(), 10_500, 13_000);
        var late = raised.First(a => a.TryGetProperty("class", out var c) && c.GetString() == "late");
        Assert.InRange(late.GetProperty("labels").GetInt64(), 10_500, 13_000);
        Assert.Contains("Class 'late' under-predicted", late.GetProperty("message").GetString(), StringComparison.Ordinal);

        // The report draws one reliability diagram per class.
        string report = File.ReadAllText(dir.File("out/report.html"));
        Assert.Contains("Reliability per class", report, StringComparison.Ordinal);
        Assert.Contains("Calibration per class over time", report, StringComparison.Ordinal);
        Assert.Contains("Predicted against observed class", report, StringComparison.Ordinal);
        // ...and around each raise, the confusion of the stretch up to it and after it.
        Assert.Contains("the stretch up to the raise, by observed class", report, StringComparison.Ordinal);
        Assert.All(Classes, c => Assert.Contains($"Class &#39;{c}&#39; against the rest", report, StringComparison.Ordinal));

        // The saved model warm-starts a second run with the same classes.
        var again = await CliRun.RunAsync("replay", demo, "--out", dir.File("again"), "--config", config, "--warm-start", dir.File("out/model.json"));
        Assert.True(again.ExitCode == 0, again.Error);
        var warm = JsonDocument.Parse(File.ReadAllText(dir.File("again/summary.json"))).RootElement;
        Assert.True(warm.GetProperty("log_loss").GetDouble() < summary.GetProperty("log_loss").GetDouble());
        // ...and is refused, with the reason, by a binary configuration.
        var binary = await CliRun.RunAsync("replay", demo, "--out", dir.File("binary"), "--warm-start", dir.File("out/model.json"));
        Assert.Equal(3, binary.ExitCode);
        Assert.Contains("Model:Classes", binary.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Monitor_ProbabilityObjects_AreGradedAndDisagreeingOnesDeadLettered()
    {
        using var dir = new TempFolder();
        string input = dir.File("external.jsonl");
        var lines = new List<string>();
        var random = new Random(5);
        for (int i = 0; i < 3_000; i++)
        {
            int y = random.NextDouble() < 0.6 ? 0 : random.Next(1, 4);
            lines.Add($$"""{"id":"x{{i}}","p":{"on-time":0.6,"late":0.2,"failed":0.1,"cancelled":0.1},"label":"{{Classes[y]}}"}""");
        }
        lines.Add("""{"id":"bad-1","p":{"on-time":0.6,"late":0.2,"failed":0.1},"label":"late"}""");
        lines.Add("""{"id":"bad-2","p":{"on-time":0.6,"late":0.3,"failed":0.1,"cancelled":0.1},"label":"late"}""");
        lines.Add("""{"id":"bad-3","p":0.4,"label":"late"}""");
        File.WriteAllLines(input, lines);
        var run = await CliRun.RunAsync("monitor", input, "--out", dir.File("out"), "--config", Path.Combine(TestCli.RepositoryRoot(), "config", "delivery-outcomes.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json"))).RootElement;
        Assert.Equal(3_000, summary.GetProperty("labels").GetInt64());
        Assert.Equal(3, summary.GetProperty("dead_letters").GetInt64());
        var reasons = File.ReadAllLines(dir.File("out/dead-letters.jsonl")).Select(l => JsonDocument.Parse(l).RootElement.GetProperty("reason").GetString()).ToList();
        Assert.Equal(["p has no probability for class 'cancelled'", "p sums to 1.1 over the classes, not 1 (within 1e-6)",
            "p must be an object over the classes of Model:Classes (on-time, late, failed, cancelled), each a probability"], reasons);
        // A constant prediction: log-loss is the cross-entropy of the observed class shares.
        var classes = summary.GetProperty("classes").EnumerateArray().ToList();
        double expected = -classes.Zip(new[] { 0.6, 0.2, 0.1, 0.1 }, (c, p) => c.GetProperty("observed_rate").GetDouble() * Math.Log(p)).Sum();
        Assert.Equal(expected, summary.GetProperty("log_loss").GetDouble(), 6);
    }
}
