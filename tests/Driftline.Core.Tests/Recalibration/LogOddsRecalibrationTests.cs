using Driftline.Core.Recalibration;
using Xunit;

namespace Driftline.Core.Tests.Recalibration;

/// <summary>
/// The live log-odds correction. Its fit is checked against statsmodels (recalibration_fit.json,
/// made by Reference/recalibration_fit.py); its behaviour on breaks against streams generated
/// here from known models, where the true probability of every label is known.
/// </summary>
public sealed class LogOddsRecalibrationTests
{
    [Fact]
    public void Learn_NoForgettingWeakPrior_MatchesStatsmodelsMaximumLikelihood()
    {
        var table = ReferenceData.ReadCsv("recalibration_fit.csv");
        var reference = ReferenceData.ReadJson("recalibration_fit.json").GetProperty("unweighted");
        var layer = new LogOddsRecalibration(new() { Mode = RecalibrationMode.Always, HalfLife = 10_000_000, PriorWeight = 1e-6 });

        foreach (double[] row in table.Rows)
        {
            layer.Learn(row[0], (int)row[1]);
        }

        // statsmodels Logit of y on logit(p); the recursive fit is one pass, so it is held to a
        // tenth of a standard error rather than to the optimiser's precision.
        Assert.Equal(reference.GetProperty("intercept").GetDouble(), layer.Intercept, 0.1 * reference.GetProperty("se_intercept").GetDouble());
        Assert.Equal(reference.GetProperty("slope").GetDouble(), layer.Slope, 0.1 * reference.GetProperty("se_slope").GetDouble());
    }

    [Fact]
    public void Learn_HalfLife500_MatchesStatsmodelsWeightedFit()
    {
        var table = ReferenceData.ReadCsv("recalibration_fit.csv");
        var reference = ReferenceData.ReadJson("recalibration_fit.json").GetProperty("half_life_500");
        var layer = new LogOddsRecalibration(new() { Mode = RecalibrationMode.Always, HalfLife = 500, PriorWeight = 1e-6 });

        foreach (double[] row in table.Rows)
        {
            layer.Learn(row[0], (int)row[1]);
        }

        // statsmodels GLM Binomial with var_weights 2^(-(n-1-i)/500): the same forgotten likelihood.
        Assert.Equal(reference.GetProperty("intercept").GetDouble(), layer.Intercept, 0.1 * reference.GetProperty("se_intercept").GetDouble());
        Assert.Equal(reference.GetProperty("slope").GetDouble(), layer.Slope, 0.1 * reference.GetProperty("se_slope").GetDouble());
    }

    [Fact]
    public void Apply_CalibratedStream_ServedLogLossWithin0002OfRaw()
    {
        var layer = Always();
        var stream = new KnownStream(seed: 11);
        double raw = 0, served = 0;
        const int n = 40_000;
        for (int i = 0; i < n; i++)
        {
            (double p, int y, _) = stream.Next(trueShift: 0, trueSlope: 1);
            raw += Loss(p, y);
            served += Loss(layer.Apply(p), y);
            layer.Learn(p, y);
        }

        Assert.True((served - raw) / n <= 0.002, $"served log-loss exceeds raw by {(served - raw) / n:F5} per label");
    }

    [Fact]
    public void Apply_AfterUnderPredictionOf04LogOdds_ServedCalibrationInTheLargeWithin001()
    {
        var layer = Always();
        var stream = new KnownStream(seed: 12);
        for (int i = 0; i < 10_000; i++)
        {
            (double p, int y, _) = stream.Next(trueShift: 0, trueSlope: 1);
            layer.Learn(p, y);
        }

        // The break: the truth is 0.4 above the model's log-odds from here on.
        double rawGap = 0, servedGap = 0;
        const int after = 15_000;
        for (int i = 0; i < after; i++)
        {
            (double p, int y, _) = stream.Next(trueShift: 0.4, trueSlope: 1);
            rawGap += p - y;
            servedGap += layer.Apply(p) - y;
            layer.Learn(p, y);
        }

        Assert.True(Math.Abs(servedGap / after) <= 0.01, $"served mean p - mean y is {servedGap / after:F4}");
        Assert.True(Math.Abs(rawGap / after) >= 0.05, $"the raw stream should be clearly off, is {rawGap / after:F4}");
    }

    [Fact]
    public void Apply_AfterSlopeHalfOverConfidence_ServedLogLossWithin001OfTruth()
    {
        var layer = Always();
        var stream = new KnownStream(seed: 13);
        for (int i = 0; i < 10_000; i++)
        {
            (double p, int y, _) = stream.Next(trueShift: 0, trueSlope: 1);
            layer.Learn(p, y);
        }

        // Burn-in: 1,000 labels after the break (two half-lives) before measuring.
        double served = 0, truth = 0, raw = 0;
        int measured = 0;
        for (int i = 0; i < 16_000; i++)
        {
            (double p, int y, double pTrue) = stream.Next(trueShift: 0, trueSlope: 0.5);
            if (i >= 1_000)
            {
                served += Loss(layer.Apply(p), y);
                truth += Loss(pTrue, y);
                raw += Loss(p, y);
                measured++;
            }
            layer.Learn(p, y);
        }

        Assert.True((served - truth) / measured <= 0.01, $"served log-loss is {(served - truth) / measured:F4} above the true model's");
        Assert.True((raw - truth) / measured > 0.03, "the break should hurt the raw stream");
    }

    [Fact]
    public void ExportImport_ContinuesBitForBit()
    {
        var options = new RecalibrationOptions { Mode = RecalibrationMode.OnAlert, ClearLabels = 5 };
        var first = new LogOddsRecalibration(options);
        var stream = new KnownStream(seed: 14);
        for (int i = 0; i < 3_000; i++)
        {
            (double p, int y, _) = stream.Next(0.3, 0.8);
            first.Learn(p, y);
            first.ObserveRules(anyRaised: i == 2_998);
        }
        var second = new LogOddsRecalibration(options);
        second.Import(first.Export());

        for (int i = 0; i < 500; i++)
        {
            (double p, int y, _) = stream.Next(0.3, 0.8);
            Assert.Equal(first.Apply(p), second.Apply(p));
            first.Learn(p, y);
            second.Learn(p, y);
            first.ObserveRules(false);
            second.ObserveRules(false);
        }
        Assert.Equal(first.Export() with { Curvature = [] }, second.Export() with { Curvature = [] });
        Assert.Equal(first.Export().Curvature, second.Export().Curvature);
    }

    [Fact]
    public void Import_DamagedState_Refused()
    {
        var layer = Always();
        Assert.Throws<ArgumentException>(() => layer.Import(new RecalibrationState(double.NaN, 1, [0, 0, 0], 0, true, 0)));
        Assert.Throws<ArgumentException>(() => layer.Import(new RecalibrationState(0, 50, [0, 0, 0], 0, true, 0)));
        Assert.Throws<ArgumentException>(() => layer.Import(new RecalibrationState(0, 1, [0, 0], 0, true, 0)));
    }

    [Fact]
    public void Learn_OutcomeIndependentOfModel_SlopeHeldAtMinimum()
    {
        var layer = Always();
        var rng = new Random(15);
        for (int i = 0; i < 20_000; i++)
        {
            double p = rng.NextDouble() * 0.98 + 0.01;
            layer.Learn(p, rng.NextDouble() < 0.3 ? 1 : 0);
        }

        // Unbounded, the slope would be fitted near 0; the bound holds it at the minimum, 0.2.
        Assert.InRange(layer.Slope, 0.2, 0.25);
    }

    [Fact]
    public void Learn_ProbabilityZeroOrOne_StaysFinite()
    {
        var layer = Always();
        for (int i = 0; i < 1_000; i++)
        {
            layer.Learn(i % 2 == 0 ? 0.0 : 1.0, i % 3 == 0 ? 1 : 0);
        }

        Assert.True(double.IsFinite(layer.Intercept) && double.IsFinite(layer.Slope));
        Assert.InRange(layer.Apply(0.0), 0.0, 1.0);
    }

    [Fact]
    public void Apply_FewerThanMinLabels_ServesRaw()
    {
        var layer = Always();
        for (int i = 0; i < 99; i++)
        {
            layer.Learn(0.1, 1);
        }
        Assert.Equal(0.1, layer.Apply(0.1));
        Assert.False(layer.Serving);

        layer.Learn(0.1, 1);
        Assert.True(layer.Serving);
        Assert.True(layer.Apply(0.1) > 0.5);
    }

    [Fact]
    public void Learn_CalibratedStream_PairStaysNearIdentity()
    {
        var layer = Always();
        var stream = new KnownStream(seed: 16);
        for (int i = 0; i < 20_000; i++)
        {
            (double p, int y, _) = stream.Next(0, 1);
            layer.Learn(p, y);
        }

        // About three standard errors of a 720-label effective sample (common practice for a margin).
        Assert.InRange(layer.Intercept, -0.2, 0.2);
        Assert.InRange(layer.Slope, 0.85, 1.15);
    }

    [Fact]
    public void ObserveRules_OnAlert_ServesFromRaiseUntilClearForStatedLabels()
    {
        var layer = new LogOddsRecalibration(new() { Mode = RecalibrationMode.OnAlert, ClearLabels = 3, MinLabels = 10 });
        for (int i = 0; i < 500; i++)
        {
            layer.Learn(0.2, i % 2);
        }
        Assert.False(layer.Serving);
        Assert.Equal(0.2, layer.Apply(0.2));

        layer.ObserveRules(anyRaised: true);
        Assert.True(layer.Serving);
        Assert.NotEqual(0.2, layer.Apply(0.2));

        layer.ObserveRules(false);
        layer.ObserveRules(false);
        Assert.True(layer.Serving);
        layer.ObserveRules(false);
        Assert.False(layer.Serving);
    }

    [Theory]
    [InlineData(5.0, 2.0, 0.2, 5.0, 2000, "Recalibration:HalfLife")]
    [InlineData(500.0, 0.0, 0.2, 5.0, 2000, "Recalibration:PriorWeight")]
    [InlineData(500.0, 2.0, 1.5, 5.0, 2000, "Recalibration:MinSlope")]
    [InlineData(500.0, 2.0, 0.2, 5.0, 0, "Recalibration:ClearLabels")]
    public void Validate_BadValue_NamesOption(double halfLife, double prior, double minSlope, double maxSlope, int clear, string option)
    {
        var options = new RecalibrationOptions { HalfLife = halfLife, PriorWeight = prior, MinSlope = minSlope, MaxSlope = maxSlope, ClearLabels = clear };
        Assert.Contains(options.Validate(), e => e.Option == option);
        Assert.Empty(new RecalibrationOptions().Validate());
    }

    private static LogOddsRecalibration Always() => new(new() { Mode = RecalibrationMode.Always });

    private static double Loss(double p, int y)
    {
        double c = Math.Clamp(p, 1e-15, 1 - 1e-15);
        return y == 1 ? -Math.Log(c) : -Math.Log(1 - c);
    }

    /// <summary>A model's log-odds z ~ N(−0.8, 1.5²) and outcomes from the truth σ(shift + slope · z).</summary>
    private sealed class KnownStream(int seed)
    {
        private readonly Random _rng = new(seed);

        public (double P, int Y, double PTrue) Next(double trueShift, double trueSlope)
        {
            double u1 = 1.0 - _rng.NextDouble(), u2 = _rng.NextDouble();
            double z = -0.8 + 1.5 * Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
            double p = 1 / (1 + Math.Exp(-z));
            double pTrue = 1 / (1 + Math.Exp(-(trueShift + trueSlope * z)));
            return (p, _rng.NextDouble() < pTrue ? 1 : 0, pTrue);
        }
    }
}
