using System.Text.Json;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary><c>replay --challenger</c>: a configuration in the shadow, judged against the champion.</summary>
public sealed class ChallengerReplayTests(DemoReplay demo) : IClassFixture<DemoReplay>
{
    [Fact]
    public async Task Replay_WithChallenger_JudgedAgainstTheDefaults()
    {
        using var folder = new TempFolder();
        string challenger = folder.File("short-memory.json");
        File.WriteAllText(challenger, """{"Model":{"HalfLifeLabels":1000}}""");

        var run = await TestCli.RunAsync("replay", demo.Input, "--challenger", challenger, "--out", folder.File("out"));

        Assert.True(run.Code == 0, run.Error);
        using var summary = JsonDocument.Parse(File.ReadAllText(Path.Combine(folder.File("out"), "short-memory", "summary.json")));
        var against = summary.RootElement.GetProperty("against_champion");
        Assert.True(against.GetProperty("paired_labels").GetInt64() > 10_000);
        Assert.True(against.GetProperty("threshold").GetDouble() > 4.6);
        Assert.True(File.Exists(Path.Combine(folder.File("out"), "default", "summary.json")));
        string comparison = File.ReadAllText(Path.Combine(folder.File("out"), "report.html"));
        Assert.Contains("id=\"challengers\"", comparison, StringComparison.Ordinal);
        // Beside the table, the challenger's log-loss against the champion's over time.
        Assert.Contains("challenger − champion log-loss per stretch", comparison, StringComparison.Ordinal);
        Assert.Contains("Expected calibration error", comparison, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_AutoPromote_ChallengerServesInTheChampionsFolderAndTheRunIsDeterministic()
    {
        // The champion barely learns (a millionth of the default step) and promotes a winner.
        using var folder = new TempFolder();
        string champion = folder.File("slow.json");
        File.WriteAllText(champion, """{"Model":{"LearningRate":0.000001},"Challengers":{"AutoPromote":true}}""");
        string challenger = folder.File("usual.json");
        File.WriteAllText(challenger, "{}");

        var first = await TestCli.RunAsync("replay", demo.Input, "--config", champion, "--challenger", challenger, "--out", folder.File("a"));
        var second = await TestCli.RunAsync("replay", demo.Input, "--config", champion, "--challenger", challenger, "--out", folder.File("b"));

        Assert.True(first.Code == 0, first.Error);
        Assert.True(second.Code == 0, second.Error);
        using var summary = JsonDocument.Parse(File.ReadAllText(Path.Combine(folder.File("a"), "slow", "summary.json")));
        var promotion = Assert.Single(summary.RootElement.GetProperty("promotions").EnumerateArray());
        Assert.Equal("usual", promotion.GetProperty("challenger").GetString());
        long at = promotion.GetProperty("at_label").GetInt64();
        var alerts = File.ReadAllLines(Path.Combine(folder.File("a"), "slow", "alerts.jsonl")).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        var promoted = Assert.Single(alerts, a => a.GetProperty("rule").GetString() == "challenger-promoted");
        Assert.Equal(promotion.GetProperty("event_id").GetString(), promoted.GetProperty("event_id").GetString());
        // After the promotion the champion's folder carries the challenger's probabilities.
        var served = File.ReadLines(Path.Combine(folder.File("a"), "slow", "predictions.jsonl")).TakeLast(1_000).ToList();
        var shadow = File.ReadLines(Path.Combine(folder.File("a"), "usual", "predictions.jsonl")).TakeLast(1_000).ToList();
        Assert.Equal(shadow, served);
        Assert.True(at > 0);
        foreach (var name in new[] { "predictions.jsonl", "alerts.jsonl", "metrics.csv", "model.json" })
        {
            Assert.Equal(File.ReadAllBytes(Path.Combine(folder.File("a"), "slow", name)), File.ReadAllBytes(Path.Combine(folder.File("b"), "slow", name)));
        }
    }

    [Fact]
    public async Task Help_Replay_NamesTheChallengerOption()
    {
        var help = await TestCli.RunAsync("replay", "--help");
        Assert.Contains("--challenger", help.Out, StringComparison.Ordinal);
    }
}
