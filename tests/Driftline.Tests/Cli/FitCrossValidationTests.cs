using System.Globalization;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>
/// <c>fit --folds K --repeats R</c>: the wiring of the cross-validation into the command. The
/// machinery itself is checked fold by fold against scikit-learn in
/// Driftline.Core.Tests/Fitting/CrossValidationReferenceTests.cs.
/// </summary>
public sealed class FitCrossValidationTests
{
    private static IEnumerable<string> Orders() => Enumerable.Range(0, 400).Select(i =>
        $"{{\"id\":\"o-{i}\",\"features\":{{\"zone\":\"{(i % 3 == 0 ? "harbour" : i % 3 == 1 ? "market" : "old-town")}\",\"distance_km\":{i % 9}.5,\"items\":{(i * 7) % 5}}},\"label\":{((i % 9) + (i % 3 == 0 ? 2 : 0) + ((i * 13) % 7) > 9 ? 1 : 0)}}}");

    private static async Task<CliRun> Fit(TempFolder dir, params string[] extra)
    {
        File.WriteAllLines(dir.File("in.jsonl"), Orders());
        return await CliRun.RunAsync(["fit", dir.File("in.jsonl"), "--out", dir.File("m.json"), .. extra]);
    }

    private static string[] FoldLines(string output) =>
        output.Split('\n').SkipWhile(l => !l.StartsWith("repetition", StringComparison.Ordinal)).Skip(1).TakeWhile(l => l.Trim().Length > 0).ToArray();

    [Fact]
    public async Task Fit_FourFoldsThreeRepeats_ReportsEachFoldMeansAndSkillOverThePrior()
    {
        using var dir = new TempFolder();
        var run = await Fit(dir, "--folds", "4", "--repeats", "3");

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("Cross-validation: 4-fold stratified, 3 repetitions, seed 20261202", run.Out, StringComparison.Ordinal);
        var folds = FoldLines(run.Out);
        Assert.Equal(12, folds.Length);
        // Stratified folds of 400 rows: 100 held out each time.
        Assert.All(folds, l => Assert.Equal("100", l.Split(' ', StringSplitOptions.RemoveEmptyEntries)[2]));
        var logLoss = run.Out.Split('\n').Single(l => l.StartsWith("log-loss ", StringComparison.Ordinal)).Split(' ', StringSplitOptions.RemoveEmptyEntries);
        double model = Parse(logLoss[1]);
        double prior = Parse(logLoss[5]);
        // The mean is the mean of the printed folds (to their 4 decimals).
        Assert.Equal(folds.Average(l => Parse(l.Split(' ', StringSplitOptions.RemoveEmptyEntries)[3])), model, 5e-5);
        Assert.True(model < prior, run.Out);
        Assert.Equal(1 - (model / prior), Parse(logLoss[^1]), 2e-4);
        foreach (var figure in new[] { "Brier ", "ECE ", "AUC ", "accuracy " })
        {
            Assert.Contains("\n" + figure, run.Out, StringComparison.Ordinal);
        }
        Assert.True(File.Exists(dir.File("m.json")));
    }

    [Fact]
    public async Task Fit_FoldsWithSummary_CvObjectHoldsThePrintedFigures()
    {
        using var dir = new TempFolder();
        var run = await Fit(dir, "--folds", "4", "--repeats", "2", "--summary", dir.File("fit.json"));
        Assert.True(run.ExitCode == 0, run.Error);

        var cv = System.Text.Json.JsonDocument.Parse(File.ReadAllText(dir.File("fit.json"))).RootElement.GetProperty("cv");
        Assert.Equal(4, cv.GetProperty("folds").GetInt32());
        Assert.Equal(2, cv.GetProperty("repeats").GetInt32());
        Assert.Equal(20261202, cv.GetProperty("seed").GetInt32());
        var printed = run.Out.Split('\n').Single(l => l.StartsWith("log-loss ", StringComparison.Ordinal)).Split(' ', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(Parse(printed[1]), cv.GetProperty("log_loss").GetProperty("mean").GetDouble(), 5e-5);
        Assert.Equal(Parse(printed[5]), cv.GetProperty("prior_log_loss").GetProperty("mean").GetDouble(), 5e-5);
        foreach (var name in new[] { "accuracy", "brier", "ece", "prior_accuracy" })
        {
            Assert.True(cv.GetProperty(name).GetProperty("sd_of_repeat_means").GetDouble() >= 0, name);
        }
    }

    [Fact]
    public async Task Fit_SameSeedTwice_SameFigures_OtherSeedOtherFolds()
    {
        using var dir = new TempFolder();
        var first = await Fit(dir, "--folds", "5");
        var again = await Fit(dir, "--folds", "5");
        var other = await Fit(dir, "--folds", "5", "--seed", "7");

        Assert.Equal(FoldLines(first.Out), FoldLines(again.Out));
        Assert.NotEqual(FoldLines(first.Out), FoldLines(other.Out));
    }

    [Theory]
    [InlineData(2, "--folds", "1")]
    [InlineData(2, "--repeats", "3")]
    [InlineData(2, "--folds", "3", "--repeats", "0")]
    [InlineData(6, "--folds", "5000")]
    public async Task Fit_BadCrossValidationOptions_OneLineAndTheCode(int code, params string[] options)
    {
        using var dir = new TempFolder();
        var run = await Fit(dir, options);

        Assert.Equal(code, run.ExitCode);
        Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Equal("", run.Out);
        Assert.False(File.Exists(dir.File("m.json")));
    }

    private static double Parse(string text) => double.Parse(text, CultureInfo.InvariantCulture);
}
