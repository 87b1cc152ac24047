using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

public sealed class DefaultConfigTests
{
    [Fact]
    public async Task Check_DefaultJson_SaysWhatTheBuiltInDefaultsSay()
    {
        // config/default.json documents the defaults; it must not drift from the code.
        var file = await CliRun.RunAsync("check", Path.Combine(RepositoryRoot(), "config", "default.json"));
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("empty.json"), "{}");
        var builtIn = await CliRun.RunAsync("check", dir.File("empty.json"));
        static string Body(string output) => string.Join('\n', output.Split('\n').Where(l => !l.Contains("valid", StringComparison.Ordinal)).Select(l => l.Replace(" (defaults)", "", StringComparison.Ordinal)));
        Assert.Equal(Body(builtIn.Out), Body(file.Out));
    }

    private static string RepositoryRoot() => TestCli.RepositoryRoot();
}
