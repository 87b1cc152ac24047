using System.CommandLine;
using Driftline.Cli;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>The command line itself: unknown commands, help, value names, options that need another.</summary>
public sealed class CommandLineTests
{
    [Fact]
    public async Task Run_UnknownCommand_ListsTheCommandsInOneLine()
    {
        var run = await CliRun.RunAsync("frobnicate");
        Assert.Equal(ExitCode.Usage, run.ExitCode);
        Assert.Equal("driftline: unknown command 'frobnicate'; commands are replay, run, monitor, demo, check, fit, inspect and help", run.Error.TrimEnd());
        Assert.DoesNotContain("Required command", run.Error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("replya", "replay")]
    [InlineData("Replay", "replay")]
    [InlineData("mon", "monitor")]
    [InlineData("inpsect", "inspect")]
    [InlineData("chek", "check")]
    public async Task Run_CommandCloseToOne_SuggestsIt(string given, string suggested)
    {
        var run = await CliRun.RunAsync(given, "x");
        Assert.Equal(ExitCode.Usage, run.ExitCode);
        Assert.Single(run.Error.TrimEnd().Split('\n'));
        Assert.EndsWith($"; did you mean '{suggested}'?", run.Error.TrimEnd(), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Help_AsACommand_PrintsWhatHelpOptionPrints()
    {
        var word = await CliRun.RunAsync("help");
        var option = await CliRun.RunAsync("--help");
        Assert.Equal(ExitCode.Ok, word.ExitCode);
        Assert.Equal(option.Out, word.Out);
        Assert.Contains("replay", word.Out, StringComparison.Ordinal);
        Assert.Empty(word.Error);
    }

    [Fact]
    public async Task Help_WithACommand_PrintsThatCommandsHelp()
    {
        var word = await CliRun.RunAsync("help", "replay");
        var option = await CliRun.RunAsync("replay", "--help");
        Assert.Equal(ExitCode.Ok, word.ExitCode);
        Assert.Equal(option.Out, word.Out);
        Assert.Contains("--warm-start", word.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_NoCommand_PrintsHelpAndExitsUsage()
    {
        var run = await CliRun.RunAsync();
        Assert.Equal(ExitCode.Usage, run.ExitCode);
        Assert.Contains("Commands:", run.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("Required command", run.Error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("replay", "--out <DIR>", "--config <FILE>", "--warm-start <MODEL>")]
    [InlineData("monitor", "--out <DIR>", "--config <FILE>", "<FILE>")]
    [InlineData("fit", "--out <MODEL>", "--config <FILE>", "--ridge <L2>")]
    [InlineData("demo", "--out <FILE>", "--orders <N>", "--seed <SEED>")]
    [InlineData("run", "--bootstrap <HOST:PORT[,HOST:PORT]>", "--events-topic <TOPIC>", "--checkpoint-dir <DIR>")]
    [InlineData("inspect", "<MODEL>", "--top <N>", "--help")]
    [InlineData("check", "<FILE>", "--list", "--help")]
    public async Task Help_EveryCommand_NamesEachOptionsValue(string command, string first, string second, string third)
    {
        var run = await CliRun.RunAsync(command, "--help");
        Assert.Equal(ExitCode.Ok, run.ExitCode);
        Assert.Contains(first, run.Out, StringComparison.Ordinal);
        Assert.Contains(second, run.Out, StringComparison.Ordinal);
        Assert.Contains(third, run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public void Build_EveryOptionTakingAValue_HasAValueNameOtherThanItsOwn()
    {
        // The parser's default shows "--out <out>"; every option gets a word for what it takes.
        var root = DriftlineCli.Build(new CommandContext(TextWriter.Null, TextWriter.Null, new Dictionary<string, string?>(), () => Stream.Null));
        foreach (var command in root.Subcommands)
        {
            foreach (var option in command.Options.Where(o => o.ValueType != typeof(bool) && o.Name.StartsWith("--", StringComparison.Ordinal)))
            {
                Assert.False(string.IsNullOrEmpty(option.HelpName), $"{command.Name} {option.Name} has no value name");
                Assert.NotEqual(option.Name.TrimStart('-'), option.HelpName);
            }
        }
    }

    [Theory]
    [InlineData(new[] { "--group", "scoring" }, "driftline: --group needs a Kafka broker")]
    [InlineData(new[] { "--events-topic", "orders", "--labels-topic", "outcomes" }, "driftline: --events-topic, --labels-topic need a Kafka broker")]
    [InlineData(new[] { "--checkpoint-dir", "/tmp/x" }, "driftline: --checkpoint-dir needs a Kafka broker")]
    public async Task Run_KafkaOptionsWithoutBootstrap_RefusedInOneLine(string[] options, string expected)
    {
        // Issue 14 item 13: these were ignored and the worker read standard input.
        var run = await CliRun.RunAsync(["run", .. options], null, "{\"id\":\"a\",\"features\":{\"x\":1}}\n"u8.ToArray());
        Assert.Equal(ExitCode.Usage, run.ExitCode);
        Assert.StartsWith(expected, run.Error, StringComparison.Ordinal);
        Assert.Single(run.Error.TrimEnd().Split('\n'));
        Assert.Empty(run.Out);
    }

    [Fact]
    public async Task Run_KafkaSectionWithoutBootstrap_IsAConfigError()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("k.json"), """{"Kafka":{"EventsTopic":"orders"}}""");
        var run = await CliRun.RunAsync(["run", "--config", dir.File("k.json")], null, []);
        Assert.Equal(ExitCode.Config, run.ExitCode);
        Assert.Contains("Kafka:Bootstrap: is not set", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_KafkaSectionWithBlankBootstrap_ReadsStandardInputOnPurpose()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("k.json"), """{"Kafka":{"EventsTopic":"orders"}}""");
        var env = new Dictionary<string, string?> { ["DRIFTLINE_Kafka__Bootstrap"] = "" };
        var run = await CliRun.RunAsync(["run", "--config", dir.File("k.json")], env, "{\"id\":\"a\",\"features\":{\"x\":1}}\n"u8.ToArray());
        Assert.True(run.ExitCode == ExitCode.Ok, run.Error);
        Assert.Contains("\"id\":\"a\"", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_KafkaDefaultsFromTheEnvironmentOnly_StillReadsStandardInput()
    {
        // The Docker image sets DRIFTLINE_Kafka__CheckpointDir and runs `run`; with no broker it reads stdin.
        var env = new Dictionary<string, string?> { ["DRIFTLINE_Kafka__CheckpointDir"] = "/var/lib/driftline/checkpoints", ["DRIFTLINE_Worker__MetricsAddress"] = "*" };
        var run = await CliRun.RunAsync(["run"], env, "{\"id\":\"a\",\"features\":{\"x\":1}}\n"u8.ToArray());
        Assert.True(run.ExitCode == ExitCode.Ok, run.Error);
        Assert.Contains("\"id\":\"a\"", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Monitor_EventsFile_StopsEarlyWithAHintToReplay()
    {
        // Issue 14 item 5: an events file used to give tens of thousands of dead letters and success.
        using var dir = new TempFolder();
        string events = dir.File("demo.jsonl");
        Assert.Equal(ExitCode.Ok, (await CliRun.RunAsync("demo", "--out", events, "--orders", "3000")).ExitCode);
        var run = await CliRun.RunAsync("monitor", events, "--out", dir.File("out"));
        Assert.Equal(ExitCode.Input, run.ExitCode);
        string line = Assert.Single(run.Error.TrimEnd().Split('\n'));
        Assert.Contains("none of the first 1,000 records", line, StringComparison.Ordinal);
        Assert.Contains($"driftline replay {events} --out DIR", line, StringComparison.Ordinal);
        Assert.False(File.Exists(Path.Combine(dir.File("out"), "summary.json")));
    }

    [Fact]
    public async Task Monitor_ShortEventsFile_AlsoStopped()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("e.jsonl"), "{\"id\":\"a\",\"features\":{\"x\":1}}\n{\"id\":\"a\",\"label\":1}\n{\"id\":\"b\",\"features\":{\"x\":2},\"label\":0}\n");
        var run = await CliRun.RunAsync("monitor", dir.File("e.jsonl"), "--out", dir.File("out"));
        Assert.Equal(ExitCode.Input, run.ExitCode);
        Assert.Contains("none of the first 3 records", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Monitor_ProbabilitiesAfterSomeEvents_Runs()
    {
        // A mixed file is monitor input: the check only stops a file with no p at all in its head.
        using var dir = new TempFolder();
        var lines = new List<string> { "{\"id\":\"e\",\"features\":{\"x\":1}}" };
        for (int i = 0; i < 50; i++)
        {
            lines.Add($"{{\"id\":\"p{i}\",\"p\":0.3,\"label\":{i % 3 % 2}}}");
        }
        File.WriteAllLines(dir.File("m.jsonl"), lines);
        var run = await CliRun.RunAsync("monitor", dir.File("m.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == ExitCode.Ok, run.Error);
    }
}
