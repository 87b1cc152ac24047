using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary><c>fit --out</c> that cannot be written: one line, exit 4, and no coefficient table above it.</summary>
public sealed class FitOutputTests
{
    private static string Labelled() =>
        string.Join('\n', Enumerable.Range(0, 300).Select(i => $"{{\"id\":\"{i}\",\"features\":{{\"x\":{i % 11},\"y\":{(i * 7) % 5}}},\"label\":{((i % 11) + (i % 3) > 6 ? 1 : 0)}}}"));

    [Fact]
    public async Task Fit_OutIsAFolder_ExitsFourWithOneLineAndNoTable()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Labelled());
        Directory.CreateDirectory(dir.File("models"));
        var run = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("models"));
        Assert.Equal(4, run.ExitCode);
        Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains("it is a folder", run.Error, StringComparison.Ordinal);
        Assert.Equal("", run.Out);
        Assert.Empty(Directory.GetFileSystemEntries(dir.File("models")));
    }

    [Fact]
    public async Task Fit_DiskFullWritingTheModel_ExitsFourWithOneLineAndNoTable()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), Labelled());
        var run = await CliRun.RunAsync(["fit", dir.File("in.jsonl"), "--out", dir.File("m.json")],
            c => c with { CreateOutput = FullDiskStream.For(".tmp", 100) });
        Assert.Equal(4, run.ExitCode);
        Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains($"cannot write '{dir.File("m.json")}': {FullDiskStream.Message}", run.Error, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", run.Error, StringComparison.Ordinal);
        Assert.Equal("", run.Out);
        Assert.Equal(["in.jsonl"], Directory.GetFileSystemEntries(dir.Path).Select(Path.GetFileName));
    }
}
