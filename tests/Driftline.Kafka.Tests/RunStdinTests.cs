using System.Diagnostics;
using System.IO.Pipelines;
using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;
using Driftline.Cli;
using Driftline.Demo;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>Issue 14 item 14: <c>driftline run</c> without a broker, reading standard input.</summary>
public sealed class RunStdinTests
{
    private static readonly TimeSpan Limit = TimeSpan.FromSeconds(60);

    [Fact]
    public async Task Run_NoBootstrap_PredictionsCarryWhatTheReadmeSaysWithTimeOnlyFromTheEvent()
    {
        // The README's own statement of a prediction's fields is the reference: every field it
        // names without a condition is on every prediction.
        string readme = File.ReadAllText(Path.Combine(RepositoryRoot(), "README.md"));
        var statement = Regex.Match(readme, @"Each prediction is `\{([^`]*)\}`");
        Assert.True(statement.Success, "README no longer states a prediction's fields");
        var always = Regex.Matches(statement.Groups[1].Value, "\"([a-z_]+)\"").Select(m => m.Groups[1].Value).ToList();
        Assert.Contains("p", always);

        string input = "{\"id\":\"o-1\",\"key\":\"city-north\",\"features\":{\"distance_km\":3.4,\"zone\":\"riverside\"}}\n"
            + "{\"id\":\"o-2\",\"time\":\"2026-03-04T18:22:05.12Z\",\"key\":\"city-north\",\"features\":{\"distance_km\":1.2,\"zone\":\"harbour\"}}\n";
        var (code, output, error) = await RunAsync(["run"], input);
        Assert.True(code == ExitCode.Ok, error);
        var lines = output.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(2, lines.Count);
        Assert.All(lines, l => Assert.All(always, field => Assert.True(l.TryGetProperty(field, out _), $"no {field} in {l}")));
        Assert.False(lines[0].TryGetProperty("time", out _), "a time the event did not have");
        Assert.Equal("2026-03-04T18:22:05.12Z", lines[1].GetProperty("time").GetString());
    }

    [Fact]
    public async Task Run_NoBootstrapMulticlassRecalibrated_PredictionsCarryServedAndRawClassObjects()
    {
        // Issue 11: vector scaling on the worker's predictions, as in replay and monitor.
        using var dir = new TempDir();
        string config = Path.Combine(dir.Path, "c.json");
        File.WriteAllText(config, """{"Model":{"Classes":["on-time","late","failed"]},"Recalibration":{"Mode":"Always","MinLabels":20}}""");
        var input = new StringBuilder();
        string[] classes = ["on-time", "late", "failed"];
        for (int i = 0; i < 200; i++)
        {
            input.Append($"{{\"id\":\"d-{i}\",\"features\":{{\"distance_km\":{1 + i % 7}}},\"label\":\"{classes[i % 3 == 0 ? 1 : i % 5 == 0 ? 2 : 0]}\"}}\n");
        }

        var (code, output, error) = await RunAsync(["run", "--config", config], input.ToString());

        Assert.True(code == ExitCode.Ok, error);
        var lines = output.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(200, lines.Count);
        Assert.All(lines, l => Assert.Equal(classes, l.GetProperty("p_raw").EnumerateObject().Select(c => c.Name)));
        // Served from MinLabels on: the last predictions differ from the model's own.
        Assert.Contains(lines.Skip(100), l => l.GetProperty("p").GetRawText() != l.GetProperty("p_raw").GetRawText());
    }

    [Fact]
    public async Task Run_NoBootstrap_AlertsOnStandardErrorArePrefixedLines()
    {
        var (code, _, error) = await RunAsync(["run"], Demo());
        Assert.True(code == ExitCode.Ok, error);
        var alertish = error.Split('\n', StringSplitOptions.RemoveEmptyEntries).Where(l => l.Contains("\"rule\"", StringComparison.Ordinal)).ToList();
        Assert.NotEmpty(alertish); // the demo's storm raises alerts
        Assert.All(alertish, l =>
        {
            Assert.StartsWith(RunCommand.AlertPrefix, l, StringComparison.Ordinal);
            Assert.False(string.IsNullOrEmpty(JsonDocument.Parse(l[RunCommand.AlertPrefix.Length..]).RootElement.GetProperty("state").GetString()));
        });
    }

    [Fact]
    public async Task Run_NoBootstrapWithAlertsFile_AlertsGoToTheFileAloneAsJsonLines()
    {
        using var dir = new TempDir();
        string file = Path.Combine(dir.Path, "alerts.jsonl");
        var (code, _, error) = await RunAsync(["run", "--alerts-file", file], Demo());
        Assert.True(code == ExitCode.Ok, error);
        var alerts = File.ReadAllLines(file);
        Assert.NotEmpty(alerts);
        Assert.All(alerts, l => Assert.Contains(JsonDocument.Parse(l).RootElement.GetProperty("state").GetString(), new[] { "raised", "cleared" }));
        Assert.DoesNotContain("\"rule\"", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_NoBootstrapWithChallenger_VerdictAmongTheAlertsAndOnlyTheChampionsPredictionsOut()
    {
        // The champion barely learns (a millionth of the default step); the challenger has the
        // defaults, so it is declared better on the demo's labels. Its probabilities are not written.
        using var dir = new TempDir();
        string champion = Path.Combine(dir.Path, "slow.json");
        File.WriteAllText(champion, """{"Model":{"LearningRate":0.000001}}""");
        string challenger = Path.Combine(dir.Path, "usual.json");
        File.WriteAllText(challenger, "{}");
        string file = Path.Combine(dir.Path, "alerts.jsonl");
        string demo = Demo();
        var (code, output, error) = await RunAsync(["run", "--config", champion, "--challenger", challenger, "--alerts-file", file], demo);
        Assert.True(code == ExitCode.Ok, error);
        var verdicts = File.ReadAllLines(file).Select(l => JsonDocument.Parse(l).RootElement).Where(a => a.GetProperty("rule").GetString() == "challenger-better").ToList();
        Assert.NotEmpty(verdicts);
        Assert.Contains("'usual'", verdicts[0].GetRawText(), StringComparison.Ordinal);
        // The champion's predictions are those of a run without the challenger, byte for byte.
        var (alone, championOnly, aloneError) = await RunAsync(["run", "--config", champion, "--alerts-file", Path.Combine(dir.Path, "alone.jsonl")], demo);
        Assert.True(alone == ExitCode.Ok, aloneError);
        Assert.Equal(championOnly, output);
    }

    [Fact]
    public async Task Run_ChallengerWithOtherClasses_RefusedNamingTheOption()
    {
        using var dir = new TempDir();
        string challenger = Path.Combine(dir.Path, "three.json");
        File.WriteAllText(challenger, """{"Model":{"Classes":["on-time","late","failed"]}}""");
        var (code, _, error) = await RunAsync(["run", "--challenger", challenger], "");
        Assert.True(code == ExitCode.Config, error);
        Assert.Contains("Model:Classes", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_AlertsFileIsAFolder_ExitsFourWithOneLine()
    {
        using var dir = new TempDir();
        var (code, _, error) = await RunAsync(["run", "--alerts-file", dir.Path], "");
        Assert.True(code == ExitCode.Input, error);
        var line = Assert.Single(error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains(dir.Path, line, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_AlertsFileWithBootstrap_IsRefusedAsUsage()
    {
        var (code, _, error) = await RunAsync(["run", "--bootstrap", "127.0.0.1:9", "--alerts-file", "a.jsonl"], "");
        Assert.Equal(ExitCode.Usage, code);
        Assert.Contains("--alerts-topic", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_NoBootstrapStoppedWhileTheInputIsOpen_PrintsTheCountAndTheSignalsCode()
    {
        // Standard input is a pipe the test holds open, as a terminal or an idle producer would.
        var pipe = new Pipe();
        var output = new LockedWriter();
        var error = new LockedWriter();
        var context = new CommandContext(output, error, new Dictionary<string, string?>(), () => pipe.Reader.AsStream())
        {
            StoppedExitCode = () => ExitCode.Interrupted,
        };
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
        var run = DriftlineCli.RunAsync(["run"], context, stop.Token);
        var records = TestStream.Generate(200, keys: 2, seed: 5).Where(r => !r.IsLabel).ToList();
        await pipe.Writer.WriteAsync(Encoding.UTF8.GetBytes(string.Join("\n", records.Select(r => r.Value)) + "\n"), TestContext.Current.CancellationToken);
        await WaitUntil(() => output.Lines() >= records.Count, () => "predictions so far: " + output.Lines());

        await stop.CancelAsync();
        int code = await run.WaitAsync(Limit, TestContext.Current.CancellationToken);
        Assert.True(code == ExitCode.Interrupted, $"exit {code}: {error}");
        Assert.Contains($"driftline: stopped by SIGINT: {records.Count} predictions written", error.ToString(), StringComparison.Ordinal);
        await pipe.Writer.CompleteAsync();
    }

    [Theory]
    [InlineData("INT", 130)]
    [InlineData("TERM", 143)]
    public async Task Run_NoBootstrapRealSignalToTheProcess_PrintsTheCountAndExitsWithTheSignalsCode(string signal, int expected)
    {
        var start = new ProcessStartInfo(Path.Combine(AppContext.BaseDirectory, "driftline"))
        {
            // The child's standard input is a pipe of this test's, never the test's own.
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add("run");
        using var child = Process.Start(start)!;
        var stderr = child.StandardError.ReadToEndAsync(TestContext.Current.CancellationToken);
        try
        {
            var records = TestStream.Generate(150, keys: 2, seed: 6).Where(r => !r.IsLabel).ToList();
            foreach (var r in records)
            {
                await child.StandardInput.WriteLineAsync(r.Value);
            }
            await child.StandardInput.FlushAsync(TestContext.Current.CancellationToken);
            int predictions = 0;
            using (var read = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken))
            {
                read.CancelAfter(Limit);
                while (predictions < records.Count && await child.StandardOutput.ReadLineAsync(read.Token) is { } line)
                {
                    Assert.InRange(JsonDocument.Parse(line).RootElement.GetProperty("p").GetDouble(), 0, 1);
                    predictions++;
                }
            }
            Assert.Equal(records.Count, predictions);

            using (var kill = Process.Start("kill", ["-" + signal, child.Id.ToString(System.Globalization.CultureInfo.InvariantCulture)]))
            {
                Assert.True(kill.WaitForExit(10_000), "kill did not finish");
            }
            using var limit = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
            limit.CancelAfter(Limit);
            await child.WaitForExitAsync(limit.Token);
            string errors = await stderr.WaitAsync(Limit, TestContext.Current.CancellationToken);
            Assert.True(child.ExitCode == expected, $"exit {child.ExitCode}: {errors}");
            var last = errors.Split('\n', StringSplitOptions.RemoveEmptyEntries)[^1];
            int labels = records.Count(r => r.Value.Contains("\"label\"", StringComparison.Ordinal)); // labels inline in the events
            Assert.Equal($"driftline: stopped by SIG{signal}: {records.Count} predictions written, {labels} labels, 0 dead letters, 0 alerts", last);
            Assert.DoesNotContain("   at ", errors, StringComparison.Ordinal);
        }
        finally
        {
            if (!child.HasExited)
            {
                child.Kill();
                child.WaitForExit(10_000);
            }
        }
    }

    private static string Demo()
    {
        using var demo = new MemoryStream();
        new DemoScenario(seed: 7) { Orders = 20_000 }.Write(demo);
        return Encoding.UTF8.GetString(demo.ToArray());
    }

    private static async Task WaitUntil(Func<bool> condition, Func<string> state)
    {
        var deadline = DateTime.UtcNow + Limit;
        while (!condition())
        {
            Assert.True(DateTime.UtcNow < deadline, "timed out: " + state());
            await Task.Delay(20, TestContext.Current.CancellationToken);
        }
    }

    private static async Task<(int Code, string Out, string Error)> RunAsync(string[] args, string stdin)
    {
        var output = new StringWriter();
        var error = new StringWriter();
        var context = new CommandContext(output, error, new Dictionary<string, string?>(), () => new MemoryStream(Encoding.UTF8.GetBytes(stdin)));
        using var limit = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
        limit.CancelAfter(Limit);
        int code = await DriftlineCli.RunAsync(args, context, limit.Token);
        Assert.False(limit.IsCancellationRequested, "the run did not end by itself");
        return (code, output.ToString(), error.ToString());
    }

    private static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Driftline.sln")))
        {
            dir = dir.Parent;
        }
        return dir?.FullName ?? throw new DirectoryNotFoundException("repository root not found above " + AppContext.BaseDirectory);
    }

    /// <summary>A text writer the run writes on its threads while the test reads it.</summary>
    private sealed class LockedWriter : TextWriter
    {
        private readonly StringBuilder _text = new();

        public override Encoding Encoding => Encoding.UTF8;

        public override void Write(char value)
        {
            lock (_text)
            {
                _text.Append(value);
            }
        }

        public override void Write(string? value)
        {
            lock (_text)
            {
                _text.Append(value);
            }
        }

        public override void Write(char[] buffer, int index, int count)
        {
            lock (_text)
            {
                _text.Append(buffer, index, count);
            }
        }

        public int Lines()
        {
            lock (_text)
            {
                int n = 0;
                for (int i = 0; i < _text.Length; i++)
                {
                    n += _text[i] == '\n' ? 1 : 0;
                }
                return n;
            }
        }

        public override string ToString()
        {
            lock (_text)
            {
                return _text.ToString();
            }
        }
    }
}
