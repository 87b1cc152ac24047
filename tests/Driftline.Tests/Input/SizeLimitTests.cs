using System.Text;
using System.Text.Json;
using Driftline.Tests.Cli;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Input;

public sealed class SizeLimitTests
{
    private static List<JsonElement> DeadLetters(string folder) =>
        File.ReadAllLines(Path.Combine(folder, "dead-letters.jsonl")).Select(l => JsonDocument.Parse(l).RootElement).ToList();

    private static JsonElement Summary(string folder) => JsonDocument.Parse(File.ReadAllText(Path.Combine(folder, "summary.json"))).RootElement;

    [Fact]
    public async Task Replay_LineOverMaxLineBytes_IsADeadLetterWithItsLengthAndTheRestIsScored()
    {
        using var dir = new TempFolder();
        string big = "{\"id\":\"big\",\"features\":{\"note\":\"" + new string('n', 3_000_000) + "\"}}";
        File.WriteAllText(dir.File("in.jsonl"), "{\"id\":\"a\",\"features\":{\"x\":1}}\n" + big + "\n{\"id\":\"b\",\"features\":{\"x\":2}}\n");
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);

        var letter = Assert.Single(DeadLetters(dir.File("out")));
        Assert.Equal($"line of {big.Length:N0} bytes exceeds Input:MaxLineBytes (1,048,576)", letter.GetProperty("reason").GetString());
        Assert.Equal(2, letter.GetProperty("line").GetInt64());
        Assert.StartsWith("{\"id\":\"big\"", letter.GetProperty("raw").GetString(), StringComparison.Ordinal);
        Assert.Equal(2, Summary(dir.File("out")).GetProperty("events").GetInt64());
        Assert.DoesNotContain("\"big\"", File.ReadAllText(dir.File("out/predictions.jsonl")), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_LongIdAndValue_AreDeadLettersAndNeverReachTheModelFile()
    {
        using var dir = new TempFolder();
        string longValue = new('v', 5_000);
        File.WriteAllText(dir.File("in.jsonl"),
            $"{{\"id\":\"{new string('i', 2_000)}\",\"features\":{{\"x\":1}},\"label\":1}}\n" +
            $"{{\"id\":\"c\",\"features\":{{\"zone\":\"{longValue}\"}},\"label\":1}}\n" +
            "{\"id\":\"d\",\"features\":{\"zone\":\"north\"},\"label\":0}\n");
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);

        var reasons = DeadLetters(dir.File("out")).Select(d => d.GetProperty("reason").GetString()).ToList();
        Assert.Equal(["id is 2,000 bytes, more than Input:MaxTextBytes (1,024)", "the value of feature 'zone' is 5,000 bytes, more than Input:MaxTextBytes (1,024)"], reasons);
        Assert.DoesNotContain(longValue, File.ReadAllText(dir.File("out/model.json")), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_LowerLimitsFromConfig_Apply()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("c.json"), """{"Input":{"MaxLineBytes":2048,"MaxTextBytes":32}}""");
        File.WriteAllText(dir.File("in.jsonl"), "{\"id\":\"" + new string('a', 3000) + "\",\"features\":{}}\n{\"key\":\"" + new string('k', 40) + "\",\"id\":\"b\",\"features\":{}}\n");
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"), "--config", dir.File("c.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        var reasons = DeadLetters(dir.File("out")).Select(d => d.GetProperty("reason").GetString()).ToList();
        Assert.Equal(["line of 3,023 bytes exceeds Input:MaxLineBytes (2,048)", "key is 40 bytes, more than Input:MaxTextBytes (32)"], reasons);
    }

    [Theory]
    [InlineData("""{"Input":{"MaxLineBytes":10}}""", "Input:MaxLineBytes: 10 is outside")]
    [InlineData("""{"Input":{"MaxTextBytes":0}}""", "Input:MaxTextBytes: 0 is outside")]
    [InlineData("""{"Input":{"MaxLineBytes":4096,"MaxTextBytes":8192}}""", "Input:MaxTextBytes: 8192 is outside 16 bytes to Input:MaxLineBytes (4096)")]
    public async Task Replay_BadInputLimits_NameTheOptionAndExitWithTheConfigCode(string json, string message)
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("c.json"), json);
        File.WriteAllText(dir.File("in.jsonl"), "{\"id\":\"a\",\"features\":{}}\n");
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"), "--config", dir.File("c.json"));
        Assert.Equal(3, run.ExitCode);
        Assert.Contains(message, run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Fit_LineOverMaxLineBytes_IsCountedAsRejected()
    {
        using var dir = new TempFolder();
        var sb = new StringBuilder();
        for (int i = 0; i < 30; i++)
        {
            sb.Append($"{{\"id\":\"g{i}\",\"features\":{{\"x\":{i % 7}}},\"label\":{i % 2}}}\n");
        }
        sb.Append("{\"id\":\"big\",\"features\":{\"x\":1},\"pad\":\"").Append('p', 2_000_000).Append("\",\"label\":1}\n");
        File.WriteAllText(dir.File("in.jsonl"), sb.ToString());
        var run = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("model.json"), "--ridge", "1");
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("Fitted 30 labelled events (1 lines rejected)", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task ReplayPipeline_OversizedLine_CountsItsBytesForProgress()
    {
        // Progress is bytes read against the file's length: a skipped line must count whole.
        byte[] input = Encoding.UTF8.GetBytes("{\"id\":\"a\",\"features\":{}}\n" + new string('x', 3_000_000) + "\n{\"id\":\"b\",\"features\":{}}\n");
        var pipeline = new Driftline.Pipeline.ReplayPipeline(new Driftline.Core.Options.DriftlineOptions { Alerts = [] });
        await pipeline.RunAsync(new MemoryStream(input), _ => { }, TestContext.Current.CancellationToken);
        Assert.Equal(input.Length, pipeline.BytesRead);
        Assert.Equal(1, pipeline.DeadLetters);
    }
}
