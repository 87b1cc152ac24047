using System.Globalization;
using System.Reflection;
using System.Text.Json;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

public sealed class FitCommandTests
{
    // Spector & Mazzeo (1980) logit of GRADE on GPA, TUCE, PSI: the published 4-decimal table
    // (Greene, Econometric Analysis; as shipped in statsmodels, see Reference/README.md).
    private static readonly Dictionary<string, (double Estimate, double StdError)> Published = new()
    {
        ["intercept"] = (-13.0213, 4.9313),
        ["GPA"] = (2.8261, 1.2629),
        ["TUCE"] = (0.0952, 0.1416),
        ["PSI"] = (2.3787, 1.0646),
    };

    private static string SpectorJsonLines()
    {
        using var stream = Assembly.GetExecutingAssembly().GetManifestResourceStream("spector.csv")!;
        using var reader = new StreamReader(stream);
        var lines = reader.ReadToEnd().Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Skip(1);
        return string.Join('\n', lines.Select((l, i) =>
        {
            var v = l.Split(',');
            return $"{{\"id\":\"s{i}\",\"features\":{{\"GPA\":{v[0]},\"TUCE\":{v[1]},\"PSI\":{v[2]}}},\"label\":{v[3]}}}";
        }));
    }

    [Fact]
    public async Task Fit_SpectorMazzeo_ReproducesThePublishedCoefficientsAndStandardErrors()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("spector.jsonl"), SpectorJsonLines());
        File.WriteAllText(dir.File("raw.json"), """{"Model":{"Scaling":"None"}}""");
        var run = await CliRun.RunAsync("fit", dir.File("spector.jsonl"), "--out", dir.File("model.json"), "--config", dir.File("raw.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        foreach (var (term, (estimate, stdError)) in Published)
        {
            var row = run.Out.Split('\n').Single(l => l.StartsWith(term + " ", StringComparison.Ordinal)).Split(' ', StringSplitOptions.RemoveEmptyEntries);
            Assert.Equal(estimate, double.Parse(row[1], CultureInfo.InvariantCulture), 4);
            Assert.Equal(stdError, double.Parse(row[2], CultureInfo.InvariantCulture), 4);
        }
        Assert.Contains("-12.8896", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_WarmStartFromFit_FirstPredictionIsTheFittedModels()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("spector.jsonl"), SpectorJsonLines());
        File.WriteAllText(dir.File("raw.json"), """{"Model":{"Scaling":"None"}}""");
        Assert.Equal(0, (await CliRun.RunAsync("fit", dir.File("spector.jsonl"), "--out", dir.File("model.json"), "--config", dir.File("raw.json"))).ExitCode);
        var run = await CliRun.RunAsync("replay", dir.File("spector.jsonl"), "--out", dir.File("out"), "--config", dir.File("raw.json"), "--warm-start", dir.File("model.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        var first = JsonDocument.Parse(File.ReadLines(dir.File("out/predictions.jsonl")).First()).RootElement;
        // Row 1 of the data: GPA 2.66, TUCE 20, PSI 0, under statsmodels' full-precision fit (fits.json "spector").
        double eta = -13.021346858115693 + 2.8261125948893224 * 2.66 + 0.09515766131790933 * 20;
        Assert.Equal(1 / (1 + Math.Exp(-eta)), first.GetProperty("p").GetDouble(), 8);
        Assert.Equal(32, first.GetProperty("model_version").GetInt64());
    }

    [Fact]
    public async Task Fit_OneHotGroupWithoutRidge_ExplainsTheCollinearity()
    {
        using var dir = new TempFolder();
        var lines = Enumerable.Range(0, 200).Select(i => $"{{\"id\":\"{i}\",\"features\":{{\"zone\":\"{(i % 2 == 0 ? "a" : "b")}\",\"x\":{i % 7}}},\"label\":{(i % 3 == 0 ? 1 : 0)}}}");
        File.WriteAllLines(dir.File("in.jsonl"), lines);
        var run = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"));
        Assert.Equal(4, run.ExitCode);
        Assert.Contains("collinear", run.Error, StringComparison.Ordinal);
        Assert.Equal(0, (await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"), "--ridge", "1")).ExitCode);
    }
}
