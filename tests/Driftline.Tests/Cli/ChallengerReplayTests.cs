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
    }

    [Fact]
    public async Task Help_Replay_NamesTheChallengerOption()
    {
        var help = await TestCli.RunAsync("replay", "--help");
        Assert.Contains("--challenger", help.Out, StringComparison.Ordinal);
    }
}
