using System.Diagnostics;
using System.Globalization;
using System.Text;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>
/// A replay or monitor asked to stop (SIGINT, SIGTERM) flushes what it scored, writes no
/// summary, model or report, and exits 130 or 143; dead letters reach the disk during the run.
/// </summary>
public sealed class StopTests
{
    private const int Good = 3_000;
    private const int Bad = 30;
    private static readonly TimeSpan Limit = TimeSpan.FromSeconds(30);

    private static string Part() => OutputFailureTests.Events(Good + Bad, badEvery: (Good + Bad) / Bad);

    private static async Task WaitForLinesAsync(string path, int lines, Func<string> why)
    {
        var clock = Stopwatch.StartNew();
        while (!File.Exists(path) || File.ReadAllLines(path).Length < lines)
        {
            Assert.True(clock.Elapsed < Limit, $"{path} never reached {lines} lines during the run: {why()}");
            await Task.Delay(50, TestContext.Current.CancellationToken);
        }
    }

    [Fact]
    public async Task Replay_StoppedWhileTheInputIsIdle_FlushesWhatWasScoredWritesNoSummaryAndExits130()
    {
        using var dir = new TempFolder();
        string part = Part();
        int bad = part.Split('\n').Count(l => l.StartsWith("{\"id\":\"broken", StringComparison.Ordinal));
        var stdin = new GatedStream(Encoding.UTF8.GetBytes(part), Encoding.UTF8.GetBytes(part));
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
        var run = CliRun.RunAsync(["replay", "-", "--out", dir.File("out")], c => c, () => stdin, stop.Token);

        // Dead letters are on disk while the run goes on, not held in a buffer to the end.
        await WaitForLinesAsync(dir.File("out/dead-letters.jsonl"), bad, () => run.IsCompleted ? run.Result.Error : "running");
        await stop.CancelAsync();
        var result = await run.WaitAsync(Limit, TestContext.Current.CancellationToken);

        Assert.True(result.ExitCode == 130, result.Error);
        Assert.Contains("stopped after", result.Error, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", result.Error, StringComparison.Ordinal);
        Assert.Equal(part.Split('\n').Length - 1 - bad, File.ReadAllLines(dir.File("out/predictions.jsonl")).Length);
        foreach (var name in new[] { "summary.json", "model.json", "report.html" })
        {
            Assert.False(File.Exists(dir.File("out/" + name)), name);
        }
        stdin.Open();
    }

    [Fact]
    public async Task Monitor_StoppedWhileTheInputIsIdle_Exits130WithoutSummary()
    {
        using var dir = new TempFolder();
        var sb = new StringBuilder();
        for (int i = 0; i < 2_000; i++)
        {
            sb.Append(CultureInfo.InvariantCulture, $"{{\"id\":\"m{i}\",\"p\":0.3,\"label\":{(i % 3 == 0 ? 1 : 0)}}}\n");
        }
        sb.Append("{\"id\":\"no-p\",\"features\":{}}\n");
        var stdin = new GatedStream(Encoding.UTF8.GetBytes(sb.ToString()), []);
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
        var run = CliRun.RunAsync(["monitor", "-", "--out", dir.File("out")], c => c, () => stdin, stop.Token);
        await WaitForLinesAsync(dir.File("out/dead-letters.jsonl"), 1, () => run.IsCompleted ? run.Result.Error : "running");
        await stop.CancelAsync();
        var result = await run.WaitAsync(Limit, TestContext.Current.CancellationToken);
        Assert.True(result.ExitCode == 130, result.Error);
        Assert.False(File.Exists(dir.File("out/summary.json")));
        stdin.Open();
    }

    [Theory]
    [InlineData("INT", 130)]
    [InlineData("TERM", 143)]
    public async Task Replay_RealSignalToTheProcess_StopsCleanlyWithTheSignalsCode(string signal, int expected)
    {
        using var dir = new TempFolder();
        string fifo = dir.File("in.fifo");
        Run("mkfifo", fifo);
        string part = Part();
        int bad = part.Split('\n').Count(l => l.StartsWith("{\"id\":\"broken", StringComparison.Ordinal));

        var start = new ProcessStartInfo(Path.Combine(AppContext.BaseDirectory, "driftline"))
        {
            // The input is the named pipe; standard input is closed at once, never read.
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        foreach (var arg in new[] { "replay", fifo, "--out", dir.File("out") })
        {
            start.ArgumentList.Add(arg);
        }
        using var child = Process.Start(start)!;
        child.StandardInput.Close();
        var stdout = child.StandardOutput.ReadToEndAsync(TestContext.Current.CancellationToken);
        var stderr = child.StandardError.ReadToEndAsync(TestContext.Current.CancellationToken);
        try
        {
            // Opening a pipe for writing waits for its reader: bounded, in case the child died.
            await using var writer = await Task.Run(() => new FileStream(fifo, FileMode.Open, FileAccess.Write), TestContext.Current.CancellationToken)
                .WaitAsync(Limit, TestContext.Current.CancellationToken);
            await writer.WriteAsync(Encoding.UTF8.GetBytes(part), TestContext.Current.CancellationToken);
            await writer.FlushAsync(TestContext.Current.CancellationToken);

            await WaitForLinesAsync(dir.File("out/dead-letters.jsonl"), bad, () => child.HasExited ? "exited " + child.ExitCode : "running");
            Run("kill", "-" + signal, child.Id.ToString(CultureInfo.InvariantCulture));
            using var limit = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
            limit.CancelAfter(Limit);
            await child.WaitForExitAsync(limit.Token);

            string errors = await stderr.WaitAsync(Limit, TestContext.Current.CancellationToken);
            Assert.True(child.ExitCode == expected, $"exit {child.ExitCode}: {errors}");
            Assert.Contains("stopped after", errors, StringComparison.Ordinal);
            Assert.DoesNotContain("   at ", errors, StringComparison.Ordinal);
            Assert.Equal(Good, File.ReadAllLines(dir.File("out/predictions.jsonl")).Length);
            Assert.False(File.Exists(dir.File("out/summary.json")));
            Assert.False(File.Exists(dir.File("out/model.json")));
            _ = await stdout.WaitAsync(Limit, TestContext.Current.CancellationToken);
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

    private static void Run(string program, params string[] args)
    {
        using var process = Process.Start(program, args);
        Assert.True(process.WaitForExit(10_000), program + " did not finish");
        Assert.Equal(0, process.ExitCode);
    }
}
