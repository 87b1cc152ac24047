using System.Text;
using System.Text.Json;
using Driftline.Cli;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class RunCommandTests
{
    [Fact]
    public async Task Run_NoBootstrap_ScoresStandardInputToStandardOutput()
    {
        var records = TestStream.Generate(300, keys: 2, seed: 4);
        var input = string.Join("\n", records.OrderBy(r => r.TimestampMs).Select(r => r.Value)) + "\n{broken\n";
        var (code, output, error) = await RunAsync(["run"], stdin: input);
        Assert.Equal(ExitCode.Ok, code);
        var lines = output.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(300, lines.Length);
        Assert.All(lines, l => Assert.InRange(JsonDocument.Parse(l).RootElement.GetProperty("p").GetDouble(), 0, 1));
        Assert.DoesNotContain("driftline:", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_UnknownKafkaOption_NamesItAndExitsWithConfig()
    {
        using var dir = new TempDir();
        string config = Path.Combine(dir.Path, "c.json");
        File.WriteAllText(config, "{\"Kafka\":{\"Bootstrapp\":\"127.0.0.1:9\"}}");
        var (code, _, error) = await RunAsync(["run", "--config", config]);
        Assert.Equal(ExitCode.Config, code);
        Assert.Contains("Bootstrapp", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_AutoCommitTurnedOn_IsRefusedWithTheFix()
    {
        var env = new Dictionary<string, string?> { ["DRIFTLINE_Kafka__Client__enable.auto.commit"] = "true" };
        var (code, _, error) = await RunAsync(["run", "--bootstrap", "127.0.0.1:9"], env);
        Assert.Equal(ExitCode.Config, code);
        Assert.Contains("Kafka:Client:enable.auto.commit", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_ClientSettingTheClientRejects_ExitsKafkaWithOneClearMessage()
    {
        using var dir = new TempDir();
        var env = new Dictionary<string, string?>
        {
            ["DRIFTLINE_Kafka__Client__no.such.setting"] = "1",
            ["DRIFTLINE_Worker__MetricsPort"] = "0",
        };
        var (code, _, error) = await RunAsync(["run", "--bootstrap", "127.0.0.1:9", "--checkpoint-dir", dir.Path], env);
        Assert.True(code == ExitCode.Kafka, error);
        var line = Assert.Single(error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.StartsWith("driftline: Kafka client setting rejected", line, StringComparison.Ordinal);
    }

    private static async Task<(int Code, string Out, string Error)> RunAsync(string[] args, IDictionary<string, string?>? env = null, string stdin = "")
    {
        var output = new StringWriter();
        var error = new StringWriter();
        var context = new CommandContext(output, error, env ?? new Dictionary<string, string?>(), () => new MemoryStream(Encoding.UTF8.GetBytes(stdin)));
        int code = await DriftlineCli.RunAsync(args, context, TestContext.Current.CancellationToken);
        return (code, output.ToString(), error.ToString());
    }
}
