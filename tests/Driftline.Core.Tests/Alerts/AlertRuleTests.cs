using Driftline.Core.Alerts;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Alerts;

public sealed class AlertRuleTests
{
    private static (CalibrationWindow Model, CalibrationWindow Prior) Windows(int size = 100) => (new CalibrationWindow(size), new CalibrationWindow(size));

    [Fact]
    public void Evaluate_GapCrossesAndReturns_RaisesOnceAndClearsOnce()
    {
        var rule = new AlertRule(new AlertRuleOptions { Name = "gap", Metric = AlertMetric.CalibrationGap, Window = 100, MinLabels = 100, Raise = 0.2, Clear = 0.1 });
        var (model, prior) = Windows();
        var changes = new List<bool>();
        // 200 calibrated labels (p = 0.5, half positive), then 100 with p = 0.5 and all positive, then calibrated again.
        for (int i = 0; i < 500; i++)
        {
            int y = i is >= 200 and < 300 ? 1 : i % 2;
            model.Add(0.5, y);
            prior.Add(0.5, y);
            if (rule.Evaluate(model, prior, 0.5, y, out _) is bool change)
            {
                changes.Add(change);
            }
        }
        Assert.Equal([true, false], changes);
    }

    [Fact]
    public void Evaluate_WithinCooldown_DoesNotRaiseAgain()
    {
        var options = new AlertRuleOptions { Name = "gap", Metric = AlertMetric.CalibrationGap, Window = 10, MinLabels = 10, Raise = 0.3, Clear = 0.1, CooldownLabels = 1_000 };
        var rule = new AlertRule(options);
        var (model, prior) = Windows(10);
        int raises = 0;
        // Alternate 20 bad labels and 20 good ones: without the cool-down this raises every cycle.
        for (int i = 0; i < 400; i++)
        {
            int y = (i / 20) % 2 == 0 ? 1 : i % 2;
            model.Add(0.5, y);
            prior.Add(0.5, y);
            if (rule.Evaluate(model, prior, 0.5, y, out _) == true)
            {
                raises++;
            }
        }
        Assert.Equal(1, raises);
        options.CooldownLabels = 0;
        var eager = new AlertRule(options);
        var (m2, p2) = Windows(10);
        int eagerRaises = 0;
        for (int i = 0; i < 400; i++)
        {
            int y = (i / 20) % 2 == 0 ? 1 : i % 2;
            m2.Add(0.5, y);
            p2.Add(0.5, y);
            eagerRaises += eager.Evaluate(m2, p2, 0.5, y, out _) == true ? 1 : 0;
        }
        Assert.True(eagerRaises > 5, $"{eagerRaises}");
    }

    [Fact]
    public void Evaluate_RelativeToReference_ComparesWithTheFirstFullWindow()
    {
        var rule = new AlertRule(new AlertRuleOptions { Name = "loss", Metric = AlertMetric.LogLoss, Window = 100, MinLabels = 100, Raise = 1.5, Clear = 1.1, RelativeTo = AlertBaseline.Reference });
        var (model, prior) = Windows();
        double last = double.NaN;
        bool? change = null;
        for (int i = 0; i < 100; i++)
        {
            model.Add(0.8, 1);
            prior.Add(0.5, 1);
            change = rule.Evaluate(model, prior, 0.8, 1, out last);
        }
        Assert.Null(change);
        Assert.Equal(-Math.Log(0.8), rule.Reference, 12);
        // Log-loss of p = 0.8 on y = 0 is ln 5 = 1.609, over 7 times the reference ln 1.25 = 0.223.
        for (int i = 0; i < 30 && change is null; i++)
        {
            model.Add(0.8, 0);
            prior.Add(0.5, 0);
            change = rule.Evaluate(model, prior, 0.8, 0, out last);
        }
        Assert.True(change);
        Assert.True(last >= 1.5);
    }

    [Fact]
    public void Evaluate_CalibrationZ_ScalesWithTheStandardError()
    {
        // 400 labels at p = 0.5 with 230 positives: gap 30, standard error sqrt(400 * 0.25) = 10, z = 3.
        var (model, prior) = Windows(400);
        for (int i = 0; i < 400; i++)
        {
            int y = i < 230 ? 1 : 0;
            model.Add(0.5, y);
            prior.Add(0.5, y);
        }
        Assert.Equal(3.0, AlertRule.Measure(AlertMetric.CalibrationZ, model, prior), 9);
        Assert.Equal(-3.0, model.CalibrationZ, 9);
    }

    [Fact]
    public void Explanation_UnderPredictingWindow_SaysSoAndNamesTheWorstBin()
    {
        var window = new CalibrationWindow(1_000);
        var random = new Random(4);
        for (int i = 0; i < 1_000; i++)
        {
            double p = 0.05 + 0.9 * random.NextDouble();
            // True log-odds one higher than claimed: outcomes more frequent than predicted.
            double q = 1 / (1 + Math.Exp(-(Math.Log(p / (1 - p)) + 1)));
            window.Add(p, random.NextDouble() < q ? 1 : 0);
        }
        var e = AlertExplanation.Of(window);
        Assert.StartsWith("under-predicting", e.Direction(), StringComparison.Ordinal);
        Assert.True(e.WorstBins.Count > 0 && e.WorstBins[0].MeanY > e.WorstBins[0].MeanP);
        Assert.InRange(e.Intercept, 0.6, 1.4);
    }

    [Fact]
    public void Explanation_OverConfidentWindow_ReportsTheSlope()
    {
        var window = new CalibrationWindow(2_000);
        var random = new Random(5);
        for (int i = 0; i < 2_000; i++)
        {
            double p = 0.02 + 0.96 * random.NextDouble();
            double q = 1 / (1 + Math.Exp(-0.5 * Math.Log(p / (1 - p))));
            window.Add(p, random.NextDouble() < q ? 1 : 0);
        }
        var e = AlertExplanation.Of(window);
        Assert.Contains("over-confident", e.Direction(), StringComparison.Ordinal);
        Assert.InRange(e.Slope, 0.35, 0.65);
    }

    [Theory]
    [InlineData(nameof(AlertMetric.CalibrationGap), nameof(AlertBaseline.Prior), "RelativeTo")]
    [InlineData(nameof(AlertMetric.CalibrationInTheLarge), nameof(AlertBaseline.Reference), "RelativeTo")]
    public void Validate_BaselineThatDoesNotFitTheMetric_NamesTheOption(string metric, string baseline, string option)
    {
        var o = new AlertRuleOptions { Name = "x", Metric = Enum.Parse<AlertMetric>(metric), RelativeTo = Enum.Parse<AlertBaseline>(baseline), Raise = 2, Clear = 1 };
        Assert.Contains(o.Validate("Alerts:0"), e => e.Option == $"Alerts:0:{option}");
    }

    [Fact]
    public void Evaluate_CalibrationDrift_QuietWhileCalibratedThenRaisedAfterAShift()
    {
        // Labels drawn from the claimed p, then from p shifted by +0.8 in log-odds.
        var rule = new AlertRule(new AlertRuleOptions { Name = "drift", Metric = AlertMetric.CalibrationDrift, Window = 500, MinLabels = 100 });
        var (model, prior) = Windows(500);
        var random = new Random(8);
        long raisedAt = -1;
        for (int i = 0; i < 40_000 && raisedAt < 0; i++)
        {
            double p = 0.1 + 0.8 * random.NextDouble();
            double q = i < 30_000 ? p : 1 / (1 + Math.Exp(-(Math.Log(p / (1 - p)) + 0.8)));
            int y = random.NextDouble() < q ? 1 : 0;
            model.Add(p, y);
            prior.Add(0.5, y);
            if (rule.Evaluate(model, prior, p, y, out _) == true)
            {
                raisedAt = i;
            }
        }
        Assert.InRange(raisedAt, 30_000, 31_000);
        Assert.StartsWith("log-odds +", rule.Cusum!.RaisedBy!.Value.Describe(), StringComparison.Ordinal);
    }

    [Fact]
    public void Evaluate_HosmerLemeshowBelowThreshold_RaisesOnAMiscalibratedWindow()
    {
        var rule = new AlertRule(new AlertRuleOptions { Name = "hl", Metric = AlertMetric.HosmerLemeshowP, Window = 1_000, MinLabels = 1_000, Raise = 0.001, Clear = 0.05, Direction = AlertDirection.Below });
        var (model, prior) = Windows(1_000);
        var random = new Random(9);
        bool? first = null;
        for (int i = 0; i < 3_000 && first is null; i++)
        {
            double p = 0.05 + 0.9 * random.NextDouble();
            double q = i < 1_500 ? p : 1 / (1 + Math.Exp(-0.4 * Math.Log(p / (1 - p))));
            int y = random.NextDouble() < q ? 1 : 0;
            model.Add(p, y);
            prior.Add(0.5, y);
            first = rule.Evaluate(model, prior, p, y, out _);
            Assert.True(first != true || i >= 1_500, $"raised at {i} before the break");
        }
        Assert.True(first);
    }
}
