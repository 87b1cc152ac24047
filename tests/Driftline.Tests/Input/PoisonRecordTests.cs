using System.Text;
using System.Text.Json;
using Driftline.Tests.Cli;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Input;

/// <summary>
/// Records no parser call may take the tool down: each shape of an unpaired UTF-16 surrogate
/// escape (RFC 8259 section 8.2), among good records, on every command that reads records.
/// </summary>
public sealed class PoisonRecordTests
{
    /// <summary>One poison record per place a string is unescaped.</summary>
    public static readonly string[] Poison =
    [
        """{"id":"a\ud800","features":{"x":1}}""",
        """{"id":"p2","key":"k\udc00","features":{"x":1}}""",
        """{"id":"p3","time":"2026-03-04T18:22:05Z\ud800","features":{"x":1}}""",
        """{"id":"p4","features":{"zo\ud800ne":"north"}}""",
        """{"id":"p5","features":{"zone":"no\udfffrth"}}""",
        """{"id":"p6","features":{"tags":["ok","b\ud800"]}}""",
        """{"i\ud800d":"p7","features":{"x":1}}""",
        """{"id":"p8","p":0.4,"lab\udbffel":1}""",
    ];

    private static string Mixed(bool probabilities)
    {
        var sb = new StringBuilder();
        for (int i = 0; i < 40; i++)
        {
            sb.Append(probabilities
                ? $"{{\"id\":\"g{i}\",\"p\":0.{i % 9 + 1},\"label\":{i % 2}}}\n"
                : $"{{\"id\":\"g{i}\",\"features\":{{\"zone\":\"z{i % 3}\",\"x\":{i}}},\"label\":{i % 2}}}\n");
            if (i % 5 == 0)
            {
                sb.Append(Poison[i / 5]).Append('\n');
            }
        }
        return sb.ToString();
    }

    private static JsonElement Summary(string folder) => JsonDocument.Parse(File.ReadAllText(Path.Combine(folder, "summary.json"))).RootElement;

    private static void AssertDeadLettered(string folder)
    {
        var dead = File.ReadAllLines(Path.Combine(folder, "dead-letters.jsonl")).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(Poison.Length, dead.Count);
        Assert.All(dead, d => Assert.Contains("surrogate", d.GetProperty("reason").GetString(), StringComparison.Ordinal));
        Assert.Equal(Poison.Length, Summary(folder).GetProperty("dead_letters").GetInt64());
    }

    [Fact]
    public async Task Replay_LoneSurrogateInEveryPlace_DeadLettersEachAndScoresTheRest()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Mixed(probabilities: false));
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);
        AssertDeadLettered(dir.File("out"));
        Assert.Equal(40, Summary(dir.File("out")).GetProperty("events").GetInt64());
    }

    [Fact]
    public async Task Replay_StandardInputWithLoneSurrogates_DeadLettersEach()
    {
        using var dir = new TempFolder();
        var run = await CliRun.RunAsync(["replay", "-", "--out", dir.File("out")], null, Encoding.UTF8.GetBytes(Mixed(probabilities: false)));
        Assert.True(run.ExitCode == 0, run.Error);
        AssertDeadLettered(dir.File("out"));
    }

    [Fact]
    public async Task Monitor_LoneSurrogateInEveryPlace_DeadLettersEachAndGradesTheRest()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Mixed(probabilities: true));
        var run = await CliRun.RunAsync("monitor", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);
        AssertDeadLettered(dir.File("out"));
        Assert.Equal(40, Summary(dir.File("out")).GetProperty("labels").GetInt64());
    }

    [Fact]
    public async Task Fit_LoneSurrogateInEveryPlace_CountsEachAsRejectedAndFitsTheRest()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Mixed(probabilities: false));
        var run = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("model.json"), "--ridge", "1");
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains($"Fitted 40 labelled events ({Poison.Length} lines rejected)", run.Out, StringComparison.Ordinal);
    }
}
