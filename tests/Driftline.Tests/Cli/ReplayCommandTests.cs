using System.Text;
using System.Text.Json;
using Driftline.Core.Snapshots;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

public sealed class ReplayCommandTests
{
    [Fact]
    public async Task Replay_DemoStream_WritesEveryOutputAndAlertsOnlyAfterTheStorm()
    {
        using var dir = new TempFolder();
        string demo = dir.File("demo.jsonl");
        Assert.Equal(0, (await CliRun.RunAsync("demo", "--out", demo)).ExitCode);
        var run = await CliRun.RunAsync("replay", demo, "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);

        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json"))).RootElement;
        Assert.Equal(60_000, summary.GetProperty("events").GetInt64());
        Assert.Equal(6, summary.GetProperty("dead_letters").GetInt64());
        long labels = summary.GetProperty("labels").GetInt64();
        long late = summary.GetProperty("late_labels").GetInt64();
        // The demo sends about a third of the labels late and loses 2%.
        Assert.InRange(late / (double)labels, 0.30, 0.37);
        Assert.InRange(labels, 58_000, 59_500);
        Assert.True(summary.GetProperty("log_loss").GetDouble() < summary.GetProperty("prior_log_loss").GetDouble());

        var predictions = File.ReadAllLines(dir.File("out/predictions.jsonl"));
        Assert.Equal(60_000, predictions.Length);
        var first = JsonDocument.Parse(predictions[0]).RootElement;
        Assert.Equal("o-100000", first.GetProperty("id").GetString());
        Assert.Equal(0.5, first.GetProperty("p").GetDouble());

        var alerts = File.ReadAllLines(dir.File("out/alerts.jsonl")).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.NotEmpty(alerts);
        var raised = alerts.First();
        Assert.Equal("raised", raised.GetProperty("state").GetString());
        // The storm starts at order 33,000, about label 32,300: nothing is raised while the
        // stream is stable before it, and the first alert comes within 2,000 labels of it.
        Assert.InRange(raised.GetProperty("labels").GetInt64(), 32_000, 34_300);
        Assert.StartsWith("o-", raised.GetProperty("event_id").GetString(), StringComparison.Ordinal);
        foreach (var name in new[] { "rule", "metric", "value", "threshold", "window", "time", "message" })
        {
            Assert.True(raised.TryGetProperty(name, out _), name);
        }
        Assert.Contains(alerts, a => a.GetProperty("state").GetString() == "cleared");

        var dead = File.ReadAllLines(dir.File("out/dead-letters.jsonl")).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(6, dead.Count);
        Assert.All(dead, d => Assert.True(d.GetProperty("line").GetInt64() > 0));
        Assert.Contains(dead, d => d.GetProperty("reason").GetString()!.StartsWith("not valid JSON", StringComparison.Ordinal));
        Assert.Contains(dead, d => d.GetProperty("reason").GetString() == "label must be 0, 1, true or false");

        var metrics = File.ReadAllLines(dir.File("out/metrics.csv"));
        Assert.StartsWith("labels,events,time,", metrics[0], StringComparison.Ordinal);
        Assert.Equal(labels / 1000, metrics.Length - 1);

        using var model = File.OpenRead(dir.File("out/model.json"));
        var snapshot = SnapshotCodec.Read(model);
        Assert.Equal(labels, snapshot.Models.Single().Learner.Updates);
        Assert.Contains("Alert calibration-gap", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_DashReadsStandardInput()
    {
        using var dir = new TempFolder();
        byte[] input = Encoding.UTF8.GetBytes("{\"id\":\"a\",\"features\":{\"x\":1},\"label\":1}\n{\"id\":\"b\",\"features\":{\"x\":2}}\r\n\n{\"id\":\"b\",\"label\":0}");
        var run = await CliRun.RunAsync(["replay", "-", "--out", dir.Path], null, input);
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Equal(2, File.ReadAllLines(dir.File("predictions.jsonl")).Length);
        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("summary.json"))).RootElement;
        Assert.Equal(1, summary.GetProperty("late_labels").GetInt64());
        Assert.Equal(0, summary.GetProperty("dead_letters").GetInt64());
    }

    [Fact]
    public async Task Replay_MissingFile_ExitsWithTheInputCode()
    {
        using var dir = new TempFolder();
        var run = await CliRun.RunAsync("replay", dir.File("nope.jsonl"), "--out", dir.File("out"));
        Assert.Equal(4, run.ExitCode);
        Assert.Contains("cannot read", run.Error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("""{"Model":{"HashBits":40}}""", "Model:HashBits")]
    [InlineData("""{"Model":{"HashBitz":20}}""", "HashBitz")]
    [InlineData("""{"Model":{"Learner":"Newton"}}""", "Model:Learner")]
    [InlineData("""{"Alerts":[{"Name":"x","Metric":"Ece","Raise":0.05,"Clear":0.08}]}""", "Alerts:0:Clear")]
    [InlineData("""{"Model": """, "not valid JSON")]
    public async Task Replay_BadConfig_NamesTheOptionAndExitsWithTheConfigCode(string json, string option)
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("bad.json"), json);
        File.WriteAllText(dir.File("in.jsonl"), "{\"id\":\"a\",\"features\":{}}\n");
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"), "--config", dir.File("bad.json"));
        Assert.Equal(3, run.ExitCode);
        Assert.Contains(option, run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_EnvironmentOverride_IsValidatedLikeTheFile()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), "{\"id\":\"a\",\"features\":{}}\n");
        var run = await CliRun.RunAsync(["replay", dir.File("in.jsonl"), "--out", dir.File("out")], new() { ["DRIFTLINE_Model__HashBits"] = "99" }, null);
        Assert.Equal(3, run.ExitCode);
        Assert.Contains("Model:HashBits: 99 is outside", run.Error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("commands are replay, run", "frobnicate")]
    [InlineData("driftline replay --help", "replay", "x.jsonl")]
    public async Task Run_BadUsage_ExitsWithTheUsageCode(string hint, params string[] args)
    {
        var run = await CliRun.RunAsync(args);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains(hint, run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_DefaultConfig_DescribesWhatWouldRun()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("c.json"), """{"Model":{"Interactions":["zone*raining"]}}""");
        var run = await CliRun.RunAsync("check", dir.File("c.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("AdaGrad logistic regression", run.Out, StringComparison.Ordinal);
        Assert.Contains("interactions: zone*raining", run.Out, StringComparison.Ordinal);
        Assert.Contains("calibration-gap", run.Out, StringComparison.Ordinal);
    }
}
