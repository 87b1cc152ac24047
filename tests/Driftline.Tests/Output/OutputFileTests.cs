using Driftline.Output;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Output;

public sealed class OutputFileTests
{
    [Fact]
    public void Write_FailingPartway_LeavesThePreviousFileWholeAndNoTemporaryFile()
    {
        using var dir = new TempFolder();
        string path = dir.File("model.json");
        File.WriteAllText(path, "previous");
        var failure = Assert.Throws<OutputException>(() => OutputFile.Write(path, s =>
        {
            s.Write(new byte[1000]);
            s.Write(new byte[1000]);
        }, FullDiskStream.For(".tmp", 1500)));
        Assert.Equal(path, failure.FilePath);
        Assert.Equal("previous", File.ReadAllText(path));
        Assert.Equal([path], Directory.GetFiles(dir.Path));
    }

    [Fact]
    public void Write_OverALink_ReplacesTheLinkAndLeavesItsTargetAlone()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("target"), "keep");
        File.CreateSymbolicLink(dir.File("summary.json"), dir.File("target"));
        OutputFile.Write(dir.File("summary.json"), s => s.Write("{}"u8));
        Assert.Equal("keep", File.ReadAllText(dir.File("target")));
        Assert.Null(new FileInfo(dir.File("summary.json")).LinkTarget);
        Assert.Equal("{}", File.ReadAllText(dir.File("summary.json")));
    }

    [Fact]
    public void OutputStream_FileSizeLimit_IsAnOutputFailureNamingTheFile()
    {
        // The runtime raises EFBIG (a file-size limit) as ArgumentOutOfRangeException.
        using var stream = new OutputStream(new ThrowingStream(new ArgumentOutOfRangeException("value", "Specified file length was too large for the file system.")), "/out/predictions.jsonl");
        var failure = Assert.Throws<OutputException>(() => stream.Write(new byte[10]));
        Assert.Equal("/out/predictions.jsonl", failure.FilePath);
        Assert.Contains("file-size limit", failure.Line, StringComparison.Ordinal);
    }

    private sealed class ThrowingStream(Exception failure) : MemoryStream
    {
        public override void Write(ReadOnlySpan<byte> buffer) => throw failure;
    }
}
