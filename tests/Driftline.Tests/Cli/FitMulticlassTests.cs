using System.Globalization;
using System.Reflection;
using System.Text.Json;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>
/// <c>fit</c> with <c>Model:Classes</c>: the joint multinomial fit through the command, against
/// Stata's multinomial logit of party identification on anes96 (Reference/mnlogit_anes96.json,
/// as statsmodels ships it; see Reference/README.md).
/// </summary>
public sealed class FitMulticlassTests
{
    private static readonly string[] Features = ["logpopul", "selfLR", "age", "educ", "income"];

    private static string Resource(string name)
    {
        using var stream = Assembly.GetExecutingAssembly().GetManifestResourceStream(name)!;
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd();
    }

    private static JsonElement Published => JsonDocument.Parse(Resource("mnlogit_anes96.json")).RootElement;

    // Each voter as an event: logpopul = ln(popul + 0.1) as the reference file says, PID the class.
    private static string[] Voters()
    {
        var lines = Resource("anes96.csv").Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries);
        var header = lines[0].Split(',');
        int At(string c) => Array.IndexOf(header, c);
        return lines.Skip(1).Select((l, i) =>
        {
            var v = l.Split(',');
            double logpopul = Math.Log(double.Parse(v[At("popul")], CultureInfo.InvariantCulture) + 0.1);
            return FormattableString.Invariant(
                $"{{\"id\":\"v{i}\",\"features\":{{\"logpopul\":{logpopul:R},\"selfLR\":{v[At("selfLR")]},\"age\":{v[At("age")]},\"educ\":{v[At("educ")]},\"income\":{v[At("income")]}}},\"label\":{v[At("PID")]}}}");
        }).ToArray();
    }

    private static async Task<(TempFolder Dir, CliRun Run)> FitVoters(params string[] extra)
    {
        var dir = new TempFolder();
        File.WriteAllLines(dir.File("voters.jsonl"), Voters());
        File.WriteAllText(dir.File("pid.json"), """{"Model":{"Scaling":"None","Classes":["0","1","2","3","4","5","6"]}}""");
        var run = await CliRun.RunAsync(["fit", dir.File("voters.jsonl"), "--out", dir.File("m.json"), "--config", dir.File("pid.json"), .. extra]);
        return (dir, run);
    }

    [Fact]
    public async Task Fit_Anes96Summary_CoefficientsStandardErrorsAndLogLikelihoodMatchStata()
    {
        using var folder = new TempFolder();
        var (dir, run) = await FitVoters("--summary", folder.File("fit.json"));
        using var _ = dir;
        Assert.True(run.ExitCode == 0, run.Error);

        Assert.Contains("class '6' against '0' (the base class):", run.Out, StringComparison.Ordinal);
        Assert.Contains("-1461.9227", run.Out, StringComparison.Ordinal);
        var summary = JsonDocument.Parse(File.ReadAllText(folder.File("fit.json"))).RootElement;
        // Tolerances from issue 10: coefficients 1e-4, standard errors 1e-3, log-likelihood 1e-4.
        Assert.Equal(Published.GetProperty("llf").GetDouble(), summary.GetProperty("log_likelihood").GetDouble(), 1e-4);
        for (int k = 1; k < 7; k++)
        {
            string c = k.ToString(CultureInfo.InvariantCulture);
            var coef = Published.GetProperty("params_by_class_1_to_6").GetProperty(c);
            var bse = Published.GetProperty("bse_by_class_1_to_6").GetProperty(c);
            var fitted = summary.GetProperty("coefficients").GetProperty(c);
            var errors = summary.GetProperty("standard_errors").GetProperty(c);
            Assert.Equal(coef.GetProperty("const").GetDouble(), fitted.GetProperty("intercept").GetDouble(), 1e-4);
            Assert.Equal(bse.GetProperty("const").GetDouble(), errors.GetProperty("intercept").GetDouble(), 1e-3);
            foreach (var f in Features)
            {
                Assert.Equal(coef.GetProperty(f).GetDouble(), fitted.GetProperty(f).GetDouble(), 1e-4);
                Assert.Equal(bse.GetProperty(f).GetDouble(), errors.GetProperty(f).GetDouble(), 1e-3);
            }
        }
    }

    [Fact]
    public async Task Replay_WarmStartFromMulticlassFit_FirstPredictionIsTheStataModels()
    {
        var (dir, fit) = await FitVoters();
        using var _ = dir;
        Assert.True(fit.ExitCode == 0, fit.Error);

        var run = await CliRun.RunAsync("replay", dir.File("voters.jsonl"), "--out", dir.File("out"), "--config", dir.File("pid.json"), "--warm-start", dir.File("m.json"));

        Assert.True(run.ExitCode == 0, run.Error);
        var p = JsonDocument.Parse(File.ReadLines(dir.File("out/predictions.jsonl")).First()).RootElement.GetProperty("p");
        // Voter 0: popul 0, selfLR 7, age 36, educ 3, income 1, under the published coefficients.
        double[] x = [Math.Log(0.1), 7, 36, 3, 1];
        var margins = new double[7];
        for (int k = 1; k < 7; k++)
        {
            var coef = Published.GetProperty("params_by_class_1_to_6").GetProperty(k.ToString(CultureInfo.InvariantCulture));
            margins[k] = coef.GetProperty("const").GetDouble() + Features.Select((f, j) => coef.GetProperty(f).GetDouble() * x[j]).Sum();
        }
        double total = margins.Sum(Math.Exp);
        for (int k = 0; k < 7; k++)
        {
            Assert.Equal(Math.Exp(margins[k]) / total, p.GetProperty(k.ToString(CultureInfo.InvariantCulture)).GetDouble(), 5e-4);
        }
    }

    [Fact]
    public async Task Fit_MulticlassDemoWithFolds_FitsEveryClassJointlyAndCrossValidates()
    {
        using var dir = new TempFolder();
        Assert.Equal(0, (await CliRun.RunAsync("demo", "--classes", "--out", dir.File("d.jsonl"), "--orders", "8000")).ExitCode);
        File.WriteAllText(dir.File("c.json"), """{"Model":{"Classes":["on-time","late","failed","cancelled"],"Interactions":["zone*raining"]}}""");

        var run = await CliRun.RunAsync("fit", dir.File("d.jsonl"), "--out", dir.File("m.json"), "--config", dir.File("c.json"), "--folds", "3");

        Assert.True(run.ExitCode == 0, run.Error);
        foreach (var c in new[] { "late", "failed", "cancelled" })
        {
            Assert.Contains($"class '{c}' against 'on-time' (the base class):", run.Out, StringComparison.Ordinal);
        }
        // The zone reference's interaction cell is left out with it (it would sum to raining).
        var reference = run.Out.Split('\n').Single(l => l.StartsWith("Collinearity:", StringComparison.Ordinal));
        string zone = reference.Split(": ")[^1].Split(", ").Single(r => r.StartsWith("zone=", StringComparison.Ordinal));
        Assert.DoesNotContain($"\n  {zone} × raining ", run.Out, StringComparison.Ordinal);
        Assert.Contains("Cross-validation: 3-fold stratified", run.Out, StringComparison.Ordinal);
        var inspect = await CliRun.RunAsync("inspect", dir.File("m.json"));
        Assert.True(inspect.ExitCode == 0, inspect.Error);
        Assert.Contains("joint multinomial (softmax) maximum likelihood", inspect.Out, StringComparison.Ordinal);
        Assert.Contains("the base class of the fit", inspect.Out, StringComparison.Ordinal);
    }
}
