using System.Globalization;
using System.Xml.Linq;
using Driftline.Configuration;
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

    [Theory]
    [MemberData(nameof(Examples))]
    public void Example_LearningRate_NoSlowerThanTheReadmesEvidence(string relativePath)
    {
        // The README's "Defaults" table is the evidence: rates below its smallest learned too
        // slowly on the demo (config/adagrad.json had 0.05, which the README calls too slow).
        var options = ConfigLoader.Load(Path.Combine(TestCli.RepositoryRoot(), relativePath), null, out var errors);
        Assert.True(options is not null, string.Join("; ", errors));
        Assert.True(options.Model.LearningRate >= SmallestMeasuredRate(), $"{relativePath}: rate {options.Model.LearningRate}");
    }

    [Fact]
    public void AdagradExample_IsARowOfTheReadmesTable()
    {
        var options = ConfigLoader.Load(Path.Combine(TestCli.RepositoryRoot(), "config", "adagrad.json"), null, out _)!;
        var rows = DefaultsTable().ToList();
        Assert.Contains(("AdaGrad", options.Model.LearningRate, options.Model.HalfLifeLabels), rows);
    }

    [Fact]
    public void Executable_IsPackedAsTheDriftlineTool()
    {
        // `dotnet tool install` gives a `driftline` command only if the project packs as a tool.
        var project = XDocument.Load(Path.Combine(TestCli.RepositoryRoot(), "src", "Driftline", "Driftline.csproj"));
        string? Property(string name) => project.Descendants(name).SingleOrDefault()?.Value;
        Assert.Equal("true", Property("PackAsTool"));
        Assert.Equal("driftline", Property("ToolCommandName"));
        string readme = File.ReadAllText(Path.Combine(TestCli.RepositoryRoot(), "README.md"));
        Assert.Contains($"dotnet tool install {Property("PackageId")}", readme, StringComparison.Ordinal);
        Assert.Contains("dotnet publish src/Driftline", readme, StringComparison.Ordinal);
    }

    private static double SmallestMeasuredRate() => DefaultsTable().Min(r => r.Rate);

    /// <summary>The rows of the README's table of measured learner settings: learner, rate, half-life.</summary>
    private static IEnumerable<(string Learner, double Rate, double HalfLife)> DefaultsTable()
    {
        foreach (var line in File.ReadLines(Path.Combine(TestCli.RepositoryRoot(), "README.md")))
        {
            var cells = line.Split('|', StringSplitOptions.TrimEntries);
            if (cells.Length >= 6 && cells[1] is "AdaGrad" or "FTRL-Proximal" && double.TryParse(cells[2], CultureInfo.InvariantCulture, out double rate))
            {
                yield return (cells[1] == "AdaGrad" ? "AdaGrad" : "Ftrl", rate, double.Parse(cells[3].Replace(",", "", StringComparison.Ordinal), CultureInfo.InvariantCulture));
            }
        }
    }
}
