using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>issue 14 item 9: <c>inspect</c> on a model written by <c>fit</c>.</summary>
public sealed class InspectFittedModelTests
{
    private static IEnumerable<string> Orders() => Enumerable.Range(0, 400).Select(i =>
        $"{{\"id\":\"o-{i}\",\"features\":{{\"zone\":\"{(i % 3 == 0 ? "harbour" : i % 3 == 1 ? "market" : "old-town")}\",\"distance_km\":{i % 9}.5,\"raining\":{(i % 4 == 0 ? "true" : "false")}}},\"label\":{((i % 9) + (i % 4 == 0 ? 3 : 0) + (i % 5) > 8 ? 1 : 0)}}}");

    [Fact]
    public async Task Inspect_FittedModel_NamesEveryWeightAndShowsTheInterceptApart()
    {
        using var dir = new TempFolder();
        File.WriteAllLines(dir.File("in.jsonl"), Orders());
        var fit = await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"));
        Assert.True(fit.ExitCode == 0, fit.Error);

        var run = await CliRun.RunAsync("inspect", dir.File("m.json"));

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.DoesNotContain("unnamed slot", run.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("(bias)", run.Out, StringComparison.Ordinal);
        foreach (var name in new[] { "distance_km", "raining", "zone=" })
        {
            Assert.Contains("\n  " + name, run.Out, StringComparison.Ordinal);
        }
        // The intercept inspect shows is the one fit printed (fit's table, 4 decimals).
        string interceptRow = fit.Out.Split('\n').Single(l => l.StartsWith("intercept ", StringComparison.Ordinal));
        string intercept = interceptRow.Split(' ', StringSplitOptions.RemoveEmptyEntries)[1];
        Assert.Contains($"intercept {(intercept.StartsWith('-') ? "" : "+")}{intercept} ", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Inspect_FittedModel_DescribesTheFitNotOnlineLearnerSettings()
    {
        using var dir = new TempFolder();
        File.WriteAllLines(dir.File("in.jsonl"), Orders());
        Assert.Equal(0, (await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"), "--ridge", "0.5")).ExitCode);

        var run = await CliRun.RunAsync("inspect", dir.File("m.json"));

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("fitted in one batch by maximum likelihood, Newton/IRLS on 400 labelled events", run.Out, StringComparison.Ordinal);
        Assert.Contains("ridge (L2) 0.5.", run.Out, StringComparison.Ordinal);
        Assert.Contains("reference levels (left out; their effect is in the intercept): zone=", run.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("AdaGrad", run.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("learning rate", run.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("Settings it was trained with", run.Out, StringComparison.Ordinal);
        Assert.Contains("Features it was fitted with", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Inspect_SpectorFit_ShowsThePublishedIntercept()
    {
        using var dir = new TempFolder();
        using var stream = typeof(InspectFittedModelTests).Assembly.GetManifestResourceStream("spector.csv")!;
        using var reader = new StreamReader(stream);
        var rows = reader.ReadToEnd().Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Skip(1)
            .Select((l, i) => { var v = l.Split(','); return $"{{\"id\":\"s{i}\",\"features\":{{\"GPA\":{v[0]},\"TUCE\":{v[1]},\"PSI\":{v[2]}}},\"label\":{v[3]}}}"; });
        File.WriteAllLines(dir.File("spector.jsonl"), rows);
        File.WriteAllText(dir.File("raw.json"), """{"Model":{"Scaling":"None"}}""");
        Assert.Equal(0, (await CliRun.RunAsync("fit", dir.File("spector.jsonl"), "--out", dir.File("m.json"), "--config", dir.File("raw.json"))).ExitCode);

        var run = await CliRun.RunAsync("inspect", dir.File("m.json"));

        // Source: Greene's worked logit example on Spector & Mazzeo (1980): constant −13.0213 (Reference/README.md).
        Assert.Contains("intercept -13.0213 ", run.Out, StringComparison.Ordinal);
        Assert.Matches(@"\n  GPA\s+\+2\.8261", run.Out);
    }
}
