using System.Text.Json;
using Driftline.Report;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary><c>replay --config a --config b</c>: one pass, one folder per configuration, one comparison.</summary>
public sealed class CompareConfigsTests
{
    [Fact]
    public async Task Replay_TwoConfigs_WritesAFolderEachAndAComparison()
    {
        using var dir = new TempFolder();
        string input = dir.File("demo.jsonl");
        Assert.Equal(0, (await TestCli.RunAsync("demo", "--out", input, "--orders", "6000")).Code);
        string root = TestCli.RepositoryRoot();
        string fast = Path.Combine(root, "config", "forgetting-fast.json");
        string adagrad = Path.Combine(root, "config", "adagrad.json");
        string output = dir.File("out");

        var (code, stdout, stderr) = await TestCli.RunAsync("replay", input, "--out", output, "--config", fast, "--config", adagrad);

        Assert.True(code == 0, stderr);
        foreach (var name in new[] { "forgetting-fast", "adagrad" })
        {
            foreach (var file in new[] { "predictions.jsonl", "alerts.jsonl", "metrics.csv", "summary.json", "model.json", ReportWriter.FileName })
            {
                Assert.True(File.Exists(Path.Combine(output, name, file)), $"{name}/{file} missing");
            }
        }
        string comparison = File.ReadAllText(Path.Combine(output, ReportWriter.FileName));
        Assert.Contains("Configurations side by side", comparison, StringComparison.Ordinal);
        Assert.Contains("forgetting-fast", comparison, StringComparison.Ordinal);
        Assert.Contains("AdaGrad", comparison, StringComparison.Ordinal);
        Assert.Contains("[adagrad]", stdout, StringComparison.Ordinal);

        // Same events through both: the counts agree, the models differ.
        using var a = JsonDocument.Parse(File.ReadAllText(Path.Combine(output, "forgetting-fast", "summary.json")));
        using var b = JsonDocument.Parse(File.ReadAllText(Path.Combine(output, "adagrad", "summary.json")));
        Assert.Equal(a.RootElement.GetProperty("events").GetInt64(), b.RootElement.GetProperty("events").GetInt64());
        Assert.Equal(a.RootElement.GetProperty("labels").GetInt64(), b.RootElement.GetProperty("labels").GetInt64());
        Assert.NotEqual(a.RootElement.GetProperty("log_loss").GetDouble(), b.RootElement.GetProperty("log_loss").GetDouble());
    }

    [Fact]
    public async Task Replay_SingleConfigInTwoLanes_GivesIdenticalPredictions()
    {
        using var dir = new TempFolder();
        string input = dir.File("demo.jsonl");
        Assert.Equal(0, (await TestCli.RunAsync("demo", "--out", input, "--orders", "3000")).Code);
        string fast = Path.Combine(TestCli.RepositoryRoot(), "config", "forgetting-fast.json");
        File.Copy(fast, dir.File("copy.json"));

        var (code, _, stderr) = await TestCli.RunAsync("replay", input, "--out", dir.File("out"), "--config", fast, "--config", dir.File("copy.json"));

        Assert.True(code == 0, stderr);
        // Lanes share the parsed record; a lane must never disturb another's input.
        Assert.Equal(File.ReadAllText(dir.File("out/forgetting-fast/predictions.jsonl")), File.ReadAllText(dir.File("out/copy/predictions.jsonl")));
    }

    [Fact]
    public async Task Replay_TwoConfigsWithOneName_IsAUsageError()
    {
        using var dir = new TempFolder();
        Directory.CreateDirectory(dir.File("a"));
        Directory.CreateDirectory(dir.File("b"));
        File.WriteAllText(dir.File("a/x.json"), "{}");
        File.WriteAllText(dir.File("b/x.json"), "{}");
        File.WriteAllText(dir.File("in.jsonl"), "");

        var (code, _, stderr) = await TestCli.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"), "--config", dir.File("a/x.json"), "--config", dir.File("b/x.json"));

        Assert.Equal(2, code);
        Assert.Contains("two configurations are named 'x'", stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_ConfigsWithDifferentSegmentFeatures_IsAConfigErrorNamingTheOption()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("zone.json"), """{"Monitor":{"SegmentBy":"zone"}}""");
        File.WriteAllText(dir.File("plain.json"), "{}");
        File.WriteAllText(dir.File("in.jsonl"), "");

        var (code, _, stderr) = await TestCli.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"), "--config", dir.File("zone.json"), "--config", dir.File("plain.json"));

        Assert.Equal(3, code);
        Assert.Contains("Monitor:SegmentBy", stderr, StringComparison.Ordinal);
        Assert.Contains("same Monitor:SegmentBy", stderr, StringComparison.Ordinal);
    }
}
