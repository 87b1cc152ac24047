using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>
/// A bug inside Driftline (an exception no input, file or setting explains) still ends the
/// process with exit 1 and one line, never a stack trace on the terminal: the trace goes to a
/// file the line names, for the bug report.
/// </summary>
public sealed class InternalErrorTests
{
    [Fact]
    public async Task Replay_UnexpectedExceptionInsideACommand_ExitsOneWithOneLineAndTheTraceInAFile()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), OutputFailureTests.Events(200));
        // Not an I/O failure (those are exit 4): a type no caller expects, as a bug would throw.
        var run = await CliRun.RunAsync(["replay", dir.File("in.jsonl"), "--out", dir.File("out")],
            c => c with { CreateOutput = _ => throw new InvalidOperationException("injected defect") });

        Assert.Equal(1, run.ExitCode);
        var lines = run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.True(lines.Length == 1, run.Error);
        Assert.StartsWith("driftline: internal error (a bug in Driftline): InvalidOperationException: injected defect", lines[0], StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", run.Error, StringComparison.Ordinal);

        // The line names the file with the whole trace.
        int open = lines[0].IndexOf("trace in '", StringComparison.Ordinal);
        Assert.True(open > 0, lines[0]);
        string path = lines[0][(open + "trace in '".Length)..].TrimEnd().TrimEnd('\'');
        try
        {
            string trace = File.ReadAllText(path);
            Assert.Contains("InvalidOperationException: injected defect", trace, StringComparison.Ordinal);
            Assert.Contains("   at ", trace, StringComparison.Ordinal);
            Assert.Contains("replay", trace, StringComparison.Ordinal);
        }
        finally
        {
            File.Delete(path);
        }
    }
}
