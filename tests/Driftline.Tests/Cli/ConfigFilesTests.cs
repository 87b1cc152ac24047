using Xunit;

namespace Driftline.Tests.Cli;

public sealed class ConfigFilesTests
{
    public static TheoryData<string> ConfigFiles()
    {
        var data = new TheoryData<string>();
        foreach (var file in Directory.EnumerateFiles(Path.Combine(RepositoryRoot(), "config"), "*.json").Order())
        {
            data.Add(Path.GetFileName(file));
        }
        return data;
    }

    [Theory]
    [MemberData(nameof(ConfigFiles))]
    public async Task Check_EveryShippedConfig_IsValid(string name)
    {
        var run = await CliRun.RunAsync("check", Path.Combine(RepositoryRoot(), "config", name));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("valid", run.Out, StringComparison.Ordinal);
    }

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

    internal static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Driftline.sln")))
        {
            dir = dir.Parent;
        }
        return dir?.FullName ?? throw new InvalidOperationException("run the tests from inside the repository");
    }
}
