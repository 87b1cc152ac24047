using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>Every example under config/ stays valid as the options evolve.</summary>
public sealed class ConfigExamplesTests
{
    public static TheoryData<string> Examples()
    {
        var data = new TheoryData<string>();
        foreach (var file in Directory.EnumerateFiles(Path.Combine(TestCli.RepositoryRoot(), "config"), "*.json", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            data.Add(Path.GetRelativePath(TestCli.RepositoryRoot(), file));
        }
        return data;
    }

    [Fact]
    public void ConfigFolder_HasExamples() => Assert.True(Examples().Count >= 2);

    [Theory]
    [MemberData(nameof(Examples))]
    public async Task Check_ExampleConfig_IsValid(string relativePath)
    {
        var (code, stdout, stderr) = await TestCli.RunAsync("check", Path.Combine(TestCli.RepositoryRoot(), relativePath));
        Assert.True(code == 0, stderr);
        Assert.Contains("valid.", stdout, StringComparison.Ordinal);
    }
}
