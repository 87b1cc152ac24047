using System.Text;
using System.Text.Json;
using Driftline.Tests.Cli;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Input;

public sealed class OddInputReplayTests
{
    private static JsonElement Summary(string folder) => JsonDocument.Parse(File.ReadAllText(Path.Combine(folder, "summary.json"))).RootElement;

    [Fact]
    public async Task Replay_FileStartingWithAByteOrderMark_ScoresItsFirstLine()
    {
        using var dir = new TempFolder();
        // RFC 8259 section 8.1: a parser may ignore a byte order mark; editors on Windows write one.
        File.WriteAllBytes(dir.File("in.jsonl"), [0xEF, 0xBB, 0xBF, .. "{\"id\":\"a\",\"features\":{\"x\":1}}\n{\"id\":\"b\",\"features\":{\"x\":2}}\n"u8]);
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Equal(0, Summary(dir.File("out")).GetProperty("dead_letters").GetInt64());
        Assert.Equal(2, Summary(dir.File("out")).GetProperty("events").GetInt64());
    }

    [Fact]
    public async Task Replay_FarFutureEventAndRepeatedIds_AreCountedAndDeadLetteredWithReasons()
    {
        using var dir = new TempFolder();
        var sb = new StringBuilder();
        for (int i = 0; i < 50; i++)
        {
            sb.Append($"{{\"id\":\"w{i}\",\"time\":\"2026-03-04T18:{i:D2}:00Z\",\"features\":{{\"x\":{i % 3}}}}}\n");
        }
        sb.Append("{\"id\":\"far\",\"time\":\"9999-12-31T23:59:59Z\",\"features\":{\"x\":1}}\n");
        sb.Append("{\"id\":\"w3\",\"time\":\"2026-03-04T19:00:00Z\",\"features\":{\"x\":1}}\n");
        sb.Append("{\"id\":\"i1\",\"features\":{\"x\":1},\"label\":1}\n{\"id\":\"i1\",\"label\":1}\n");
        for (int i = 0; i < 50; i++)
        {
            sb.Append($"{{\"id\":\"w{i}\",\"time\":\"2026-03-04T19:{i:D2}:00Z\",\"label\":{i % 2}}}\n");
        }
        File.WriteAllText(dir.File("in.jsonl"), sb.ToString());
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);

        var summary = Summary(dir.File("out"));
        Assert.Equal(1, summary.GetProperty("clamped_times").GetInt64());
        Assert.Equal(50, summary.GetProperty("late_labels").GetInt64());
        Assert.Equal(0, summary.GetProperty("expired_labels").GetInt64());
        Assert.Equal(1, summary.GetProperty("duplicate_labels").GetInt64());
        Assert.Equal(0, summary.GetProperty("unknown_labels").GetInt64());
        var reasons = File.ReadAllLines(dir.File("out/dead-letters.jsonl")).Select(l => JsonDocument.Parse(l).RootElement.GetProperty("reason").GetString()).ToList();
        Assert.Equal(["id 'w3' already has a prediction waiting for its label; a second event with that id is refused", "second label for a prediction that was already graded"], reasons);
    }
}
