using System.Text;
using System.Text.Json;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>
/// Outputs are complete or visibly absent: end-of-run files appear whole (temporary name, then
/// rename, summary.json last), a rerun clears the previous run's end files first, and a write
/// that fails (full disk, a folder in the way) ends the run with exit 4 and one line.
/// </summary>
public sealed class OutputFailureTests
{
    internal static string Events(int count, int badEvery = 0)
    {
        var sb = new StringBuilder();
        for (int i = 0; i < count; i++)
        {
            if (badEvery > 0 && i % badEvery == badEvery - 1)
            {
                sb.Append("{\"id\":\"broken-").Append(i).Append("\",\n");
                continue;
            }
            string zone = (i % 3) switch { 0 => "riverside", 1 => "old-town", _ => "harbour" };
            sb.Append("{\"id\":\"o-").Append(i).Append("\",\"features\":{\"zone\":\"").Append(zone).Append("\",\"distance_km\":")
                .Append(1 + i % 7).Append("},\"label\":").Append(i % 4 == 0 ? 1 : 0).Append("}\n");
        }
        return sb.ToString();
    }

    private static void AssertOneLine(string error, string contains)
    {
        var lines = error.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.True(lines.Length == 1, error);
        Assert.Contains(contains, lines[0], StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_DiskFullDuringTheRun_ExitsFourWithOneLineAndNoSummary()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Events(20_000));
        var run = await CliRun.RunAsync(["replay", dir.File("in.jsonl"), "--out", dir.File("out")],
            c => c with { CreateOutput = FullDiskStream.For("predictions.jsonl", 100_000) });
        Assert.Equal(4, run.ExitCode);
        AssertOneLine(run.Error, $"cannot write '{dir.File("out/predictions.jsonl")}': {FullDiskStream.Message}");
        Assert.False(File.Exists(dir.File("out/summary.json")));
        Assert.False(File.Exists(dir.File("out/model.json")));
    }

    [Theory]
    [InlineData("model.json")]
    [InlineData("report.html")]
    [InlineData("summary.json")]
    public async Task Replay_DiskFullAtTheEnd_ExitsFourAndLeavesNoSummaryOrPartialFile(string failing)
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Events(3_000));
        var run = await CliRun.RunAsync(["replay", dir.File("in.jsonl"), "--out", dir.File("out")],
            c => c with { CreateOutput = FullDiskStream.For(failing + "." + Environment.ProcessId + ".tmp", 200) });
        Assert.Equal(4, run.ExitCode);
        AssertOneLine(run.Error, $"cannot write '{dir.File("out/" + failing)}'");
        Assert.False(File.Exists(dir.File("out/" + failing)));
        // summary.json is written last: no summary beside a file that failed.
        Assert.False(File.Exists(dir.File("out/summary.json")));
        Assert.Empty(Directory.GetFiles(dir.File("out"), "*.tmp"));
        Assert.Equal(3_000, File.ReadAllLines(dir.File("out/predictions.jsonl")).Length);
    }

    [Fact]
    public async Task Replay_FolderWhereTheSummaryGoes_ExitsFourBeforeScoring()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Events(100));
        Directory.CreateDirectory(dir.File("out/summary.json"));
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.Equal(4, run.ExitCode);
        AssertOneLine(run.Error, $"cannot write '{dir.File("out/summary.json")}': a folder has this name");
        Assert.False(File.Exists(dir.File("out/predictions.jsonl")));
    }

    [Fact]
    public async Task Replay_IntoAUsedFolder_RemovesThePreviousRunsEndFilesFirst()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Events(20_000));
        Assert.Equal(0, (await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"))).ExitCode);
        File.WriteAllText(dir.File("out/model.json.4242.tmp"), "{\"half\":");
        // The rerun fails partway (full disk): nothing of the first run may look current beside its files.
        var rerun = await CliRun.RunAsync(["replay", dir.File("in.jsonl"), "--out", dir.File("out")],
            c => c with { CreateOutput = FullDiskStream.For("predictions.jsonl", 50_000) });
        Assert.Equal(4, rerun.ExitCode);
        Assert.False(File.Exists(dir.File("out/summary.json")));
        Assert.False(File.Exists(dir.File("out/report.html")));
        Assert.False(File.Exists(dir.File("out/model.json")));
        Assert.False(File.Exists(dir.File("out/model.json.4242.tmp")));
    }

    [Fact]
    public async Task Replay_LinksPlacedInOut_AreReplacedNotFollowed()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Events(500));
        Directory.CreateDirectory(dir.File("out"));
        Directory.CreateDirectory(dir.File("elsewhere"));
        foreach (var name in new[] { "predictions.jsonl", "dead-letters.jsonl", "summary.json", "model.json", "report.html" })
        {
            File.WriteAllText(dir.File("elsewhere/" + name), "keep");
            File.CreateSymbolicLink(dir.File("out/" + name), dir.File("elsewhere/" + name));
        }
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);
        foreach (var name in new[] { "predictions.jsonl", "dead-letters.jsonl", "summary.json", "model.json", "report.html" })
        {
            Assert.Equal("keep", File.ReadAllText(dir.File("elsewhere/" + name)));
            Assert.Null(new FileInfo(dir.File("out/" + name)).LinkTarget);
        }
        Assert.Equal(500, File.ReadAllLines(dir.File("out/predictions.jsonl")).Length);
    }

    [Fact]
    public async Task Replay_CompareWithALinkForAConfigurationFolder_WritesARealFolderInsideOut()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Events(500));
        File.WriteAllText(dir.File("a.json"), "{}");
        File.WriteAllText(dir.File("b.json"), "{}");
        Directory.CreateDirectory(dir.File("out"));
        Directory.CreateDirectory(dir.File("elsewhere"));
        Directory.CreateSymbolicLink(dir.File("out/a"), dir.File("elsewhere"));
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"), "--config", dir.File("a.json"), "--config", dir.File("b.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Empty(Directory.GetFileSystemEntries(dir.File("elsewhere")));
        Assert.Null(new DirectoryInfo(dir.File("out/a")).LinkTarget);
        Assert.True(File.Exists(dir.File("out/a/summary.json")));
        Assert.True(File.Exists(dir.File("out/report.html")));
    }

    [Fact]
    public async Task Compare_RerunWhoseComparisonFails_LeavesNoSummaryInAnyConfigurationFolder()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Events(1_000));
        File.WriteAllText(dir.File("a.json"), "{}");
        File.WriteAllText(dir.File("b.json"), """{"Model":{"LearningRate":0.2}}""");
        string[] args = ["replay", dir.File("in.jsonl"), "--out", dir.File("out"), "--config", dir.File("a.json"), "--config", dir.File("b.json")];
        Assert.Equal(0, (await CliRun.RunAsync(args)).ExitCode);
        Assert.True(File.Exists(dir.File("out/a/summary.json")));

        // The comparison is written after every configuration's model and report, and before any summary.
        string comparison = dir.File("out/report.html") + "." + Environment.ProcessId + ".tmp";
        var rerun = await CliRun.RunAsync(args, c => c with { CreateOutput = p => p == comparison ? new FullDiskStream(Driftline.Output.OutputFile.CreateNew(p), 10) : Driftline.Output.OutputFile.CreateNew(p) });
        Assert.Equal(4, rerun.ExitCode);
        AssertOneLine(rerun.Error, $"cannot write '{dir.File("out/report.html")}'");
        Assert.False(File.Exists(dir.File("out/a/summary.json")));
        Assert.False(File.Exists(dir.File("out/b/summary.json")));
        Assert.False(File.Exists(dir.File("out/report.html")));
        Assert.True(File.Exists(dir.File("out/b/model.json")));
    }

    [Theory]
    [InlineData("replay")]
    [InlineData("monitor")]
    public async Task Command_OutIsAFile_SaysSo(string command)
    {
        using var dir = new TempFolder();
        // monitor refuses a file of events with no "p" before it looks at --out, so it gets probabilities.
        File.WriteAllText(dir.File("in.jsonl"), command == "monitor" ? string.Concat(Enumerable.Range(0, 10).Select(i => $"{{\"id\":\"o-{i}\",\"p\":0.3,\"label\":{i % 2}}}\n")) : Events(10));
        File.WriteAllText(dir.File("out"), "not a folder");
        var run = await CliRun.RunAsync(command, dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.Equal(4, run.ExitCode);
        AssertOneLine(run.Error, "it is a file; --out names a folder");
        Assert.Equal("not a folder", File.ReadAllText(dir.File("out")));
    }

    [Theory]
    [InlineData("replay", "IN", "--out", "OUT")]
    [InlineData("monitor", "IN", "--out", "OUT")]
    [InlineData("fit", "IN", "--out", "OUT/model.json")]
    [InlineData("inspect", "IN")]
    [InlineData("replay", "FILE", "--out", "OUT", "--warm-start", "IN")]
    public async Task Command_FolderGivenAsInputFile_SaysItIsAFolder(params string[] args)
    {
        using var dir = new TempFolder();
        Directory.CreateDirectory(dir.File("in"));
        File.WriteAllText(dir.File("file.jsonl"), Events(10));
        var run = await CliRun.RunAsync(args.Select(a => a switch { "IN" => dir.File("in"), "FILE" => dir.File("file.jsonl"), _ => a.Replace("OUT", dir.File("out"), StringComparison.Ordinal) }).ToArray());
        Assert.Equal(4, run.ExitCode);
        AssertOneLine(run.Error, "is a folder");
        Assert.DoesNotContain("denied", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_FolderGivenAsConfiguration_SaysItIsAFolder()
    {
        using var dir = new TempFolder();
        var run = await CliRun.RunAsync("check", dir.Path);
        Assert.Equal(3, run.ExitCode);
        AssertOneLine(run.Error, "is a folder");
        Assert.DoesNotContain("does not exist", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Demo_OutIsAFolder_SaysSoAndDiskFullLeavesNoPartFile()
    {
        using var dir = new TempFolder();
        var folder = await CliRun.RunAsync("demo", "--out", dir.Path, "--orders", "100");
        Assert.Equal(4, folder.ExitCode);
        AssertOneLine(folder.Error, "it is a folder");

        var full = await CliRun.RunAsync(["demo", "--out", dir.File("demo.jsonl"), "--orders", "20000"],
            c => c with { CreateOutput = FullDiskStream.For(".tmp", 100_000) });
        Assert.Equal(4, full.ExitCode);
        AssertOneLine(full.Error, FullDiskStream.Message);
        Assert.Empty(Directory.GetFileSystemEntries(dir.Path));
    }

    [Fact]
    public async Task Replay_EmptyInput_SaysNoEventsAndWritesNoReport()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), "\n\n");
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains($"No events in '{dir.File("in.jsonl")}'", run.Out, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("out/report.html")));
        Assert.False(File.Exists(dir.File("out/model.json")));
        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json"))).RootElement;
        Assert.Equal(0, summary.GetProperty("events").GetInt64());
    }

    [Fact]
    public async Task Monitor_EmptyInput_SaysNoEventsAndWritesNoReport()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), "");
        var run = await CliRun.RunAsync("monitor", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("No events in", run.Out, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("out/report.html")));
    }
}
