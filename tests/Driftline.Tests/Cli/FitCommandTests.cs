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
    public async Task Fit_OneHotGroupWithDefaults_LeavesOutTheMostFrequentLevelAndSaysSo()
    {
        using var dir = new TempFolder();
        // zone b in 100 rows, a in 67, c in 33: b is the most frequent and becomes the reference.
        var lines = Enumerable.Range(0, 200).Select(i => $"{{\"id\":\"{i}\",\"features\":{{\"zone\":\"{(i % 2 == 0 ? "b" : i % 3 == 0 ? "c" : "a")}\",\"x\":{i % 7}}},\"label\":{(i % 5 < 2 ? 1 : 0)}}}");
        File.WriteAllLines(dir.File("in.jsonl"), lines);
        var run = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("one reference level per categorical is left out", run.Out, StringComparison.Ordinal);
        Assert.Contains(": zone=b.", run.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("\nzone=b ", run.Out, StringComparison.Ordinal);
        Assert.Contains("\nzone=a ", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Fit_DemoStreamWithDefaults_FitsAndNamesTheReferenceLevels()
    {
        // issue 14 item 8: the demo's own 20,000 lines failed with "feature 39 is constant or a
        // linear combination" because its one-hot categoricals sum to the intercept.
        using var dir = new TempFolder();
        Assert.Equal(0, (await CliRun.RunAsync("demo", "--out", dir.File("demo.jsonl"), "--orders", "20000")).ExitCode);
        var run = await CliRun.RunAsync("fit", dir.File("demo.jsonl"), "--out", dir.File("m.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        var reference = run.Out.Split('\n').Single(l => l.StartsWith("Collinearity:", StringComparison.Ordinal));
        foreach (var categorical in new[] { "zone=", "courier=", "hour=" })
        {
            Assert.Contains(categorical, reference, StringComparison.Ordinal);
        }
        Assert.DoesNotContain("tags=", reference, StringComparison.Ordinal);
        Assert.Contains("converged                    yes", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Fit_InteractionWithAOneHotCategorical_LeavesOutTheReferenceCellToo()
    {
        // Summed over zone's levels, zone=z × raining is raining itself: collinear unless the
        // reference zone's cell goes with the reference zone.
        using var dir = new TempFolder();
        var lines = Enumerable.Range(0, 600).Select(i => $"{{\"id\":\"{i}\",\"features\":{{\"zone\":\"{(i % 3 == 0 ? "harbour" : i % 3 == 1 ? "market" : "old-town")}\",\"raining\":{(i % 4 < 2 ? "true" : "false")},\"x\":{i % 7}}},\"label\":{((i * 7) % 11 < 4 ? 1 : 0)}}}");
        File.WriteAllLines(dir.File("in.jsonl"), lines);
        File.WriteAllText(dir.File("c.json"), """{"Model":{"Interactions":["zone*raining"]}}""");

        var run = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"), "--config", dir.File("c.json"));

        Assert.True(run.ExitCode == 0, run.Error);
        string reference = run.Out.Split('\n').Single(l => l.StartsWith("Collinearity:", StringComparison.Ordinal)).Split(": ")[^1].TrimEnd('.');
        Assert.StartsWith("zone=", reference, StringComparison.Ordinal);
        Assert.DoesNotContain($"\n{reference} × raining ", run.Out, StringComparison.Ordinal);
        Assert.Equal(2, run.Out.Split('\n').Count(l => l.Contains(" × raining ", StringComparison.Ordinal)));
    }

    [Fact]
    public async Task Fit_DuplicatedNumericFeature_OneLineNamingItAndExitSix()
    {
        using var dir = new TempFolder();
        var lines = Enumerable.Range(0, 200).Select(i => $"{{\"id\":\"{i}\",\"features\":{{\"distance_km\":{i % 7},\"distance_m\":{(i % 7) * 1000},\"items\":{i % 3}}},\"label\":{(i % 5 < 2 ? 1 : 0)}}}");
        File.WriteAllLines(dir.File("in.jsonl"), lines);
        var run = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"));
        Assert.Equal(6, run.ExitCode);
        Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains("'distance_m' is constant or a linear combination", run.Error, StringComparison.Ordinal);
        Assert.DoesNotContain("feature 1", run.Error, StringComparison.Ordinal);
        Assert.Equal("", run.Out);
        Assert.False(File.Exists(dir.File("m.json")));
        Assert.Equal(0, (await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"), "--ridge", "1")).ExitCode);
    }

    [Fact]
    public async Task Fit_Summary_WritesThePublishedFiguresAsJson()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("spector.jsonl"), SpectorJsonLines());
        File.WriteAllText(dir.File("raw.json"), """{"Model":{"Scaling":"None"}}""");
        var run = await CliRun.RunAsync("fit", dir.File("spector.jsonl"), "--out", dir.File("model.json"), "--config", dir.File("raw.json"), "--summary", dir.File("fit.json"));
        Assert.True(run.ExitCode == 0, run.Error);

        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("fit.json"))).RootElement;
        // Greene's published table and log-likelihood −12.8896 (Reference/README.md), 4 decimals.
        Assert.Equal(-12.8896, summary.GetProperty("log_likelihood").GetDouble(), 4);
        foreach (var (term, (estimate, stdError)) in Published)
        {
            Assert.Equal(estimate, summary.GetProperty("coefficients").GetProperty("1").GetProperty(term).GetDouble(), 4);
            Assert.Equal(stdError, summary.GetProperty("standard_errors").GetProperty("1").GetProperty(term).GetDouble(), 4);
        }
        Assert.False(summary.TryGetProperty("cv", out _));
    }

    [Fact]
    public async Task Fit_NoLabelledEvents_OneLineAndExitSix()
    {
        using var dir = new TempFolder();
        File.WriteAllLines(dir.File("in.jsonl"), Enumerable.Range(0, 20).Select(i => $"{{\"id\":\"{i}\",\"features\":{{\"x\":{i}}}}}"));

        var run = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"));

        Assert.Equal(6, run.ExitCode);
        Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains("has no labelled events to fit", run.Error, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("m.json")));
    }
}
