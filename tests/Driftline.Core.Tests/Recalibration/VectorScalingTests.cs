using Driftline.Core.Recalibration;
using Xunit;

namespace Driftline.Core.Tests.Recalibration;

/// <summary>
/// The live per-class correction of a multiclass model (vector scaling, Guo et al. 2017). Its fit
/// is checked against a batch fit by scipy.optimize (vector_scaling_fit.json, made by
/// Reference/vector_scaling_fit.py); its behaviour on breaks against streams generated here from
/// known models, where the true class probabilities of every label are known.
/// </summary>
public sealed class VectorScalingTests
{
    [Fact]
    public void Learn_NoForgettingDefaultPrior_MatchesScipyPenalisedFit()
    {
        var reference = ReferenceData.ReadJson("vector_scaling_fit.json").GetProperty("prior_2");
        var layer = new VectorScaling(new() { Mode = RecalibrationMode.Always, HalfLife = 10_000_000, PriorWeight = 2 }, 3);

        LearnTable(layer);

        // The same objective as the batch fit (log-likelihood plus the prior of weight 2, no
        // forgetting), fitted in one recursive pass: held to 0.01 per parameter, about a fifth
        // of the parameters' standard errors on 5,000 labels.
        AssertParameters(reference, layer, shiftFree: false, 0.01);
    }

    [Fact]
    public void Learn_NoForgettingWeakPrior_MatchesScipyMaximumLikelihood()
    {
        var reference = ReferenceData.ReadJson("vector_scaling_fit.json").GetProperty("unpenalised");
        var layer = new VectorScaling(new() { Mode = RecalibrationMode.Always, HalfLife = 10_000_000, PriorWeight = 1e-6 }, 3);

        LearnTable(layer);

        // The a are identified only up to a common shift (scipy fixed a_0 = 0): compared as a_k − a_0.
        AssertParameters(reference, layer, shiftFree: true, 0.01);
    }

    [Fact]
    public void Apply_CalibratedStream_ServedLogLossWithin0002OfRaw()
    {
        var layer = Always();
        var stream = new KnownClassStream(seed: 21);
        double raw = 0, served = 0;
        const int n = 40_000;
        var q = new double[3];
        for (int i = 0; i < n; i++)
        {
            (double[] p, int y, _) = stream.Next(temperature: 1, shift: 0);
            layer.Apply(p, q);
            raw += -Math.Log(p[y]);
            served += -Math.Log(q[y]);
            layer.Learn(p, y);
        }

        Assert.True((served - raw) / n <= 0.002, $"served log-loss exceeds raw by {(served - raw) / n:F5} per label");
    }

    [Theory]
    [InlineData(0.5, 0.0)]
    [InlineData(1.0, 0.8)]
    [InlineData(0.6, 0.4)]
    public void Apply_AfterBreak_ServedLogLossWithin001OfTruth(double temperature, double shift)
    {
        var layer = Always();
        var stream = new KnownClassStream(seed: 22);
        var q = new double[3];
        for (int i = 0; i < 10_000; i++)
        {
            (double[] p, int y, _) = stream.Next(1, 0);
            layer.Learn(p, y);
        }

        // The break: the truth is softmax(temperature · ln p + shift towards class 1). Burn-in:
        // 1,000 labels (two half-lives) after the break before measuring.
        double served = 0, truth = 0, raw = 0;
        int measured = 0;
        for (int i = 0; i < 16_000; i++)
        {
            (double[] p, int y, double[] pTrue) = stream.Next(temperature, shift);
            if (i >= 1_000)
            {
                layer.Apply(p, q);
                served += -Math.Log(q[y]);
                truth += -Math.Log(pTrue[y]);
                raw += -Math.Log(p[y]);
                measured++;
            }
            layer.Learn(p, y);
        }

        Assert.True((served - truth) / measured <= 0.01, $"served log-loss is {(served - truth) / measured:F4} above the true model's");
        Assert.True((raw - truth) / measured > 0.03, $"the break should hurt the raw stream ({(raw - truth) / measured:F4})");
    }

    [Fact]
    public void Apply_Serving_SumsToOne()
    {
        var layer = Always();
        var stream = new KnownClassStream(seed: 23);
        var q = new double[3];
        for (int i = 0; i < 2_000; i++)
        {
            (double[] p, int y, _) = stream.Next(0.5, 0.3);
            layer.Learn(p, y);
        }
        Assert.True(layer.Serving);
        layer.Apply([0.2, 0.3, 0.5], q);
        Assert.Equal(1.0, q.Sum(), 12);
        Assert.All(q, v => Assert.InRange(v, 0.0, 1.0));
    }

    [Fact]
    public void ExportImport_ContinuesBitForBit()
    {
        var options = new RecalibrationOptions { Mode = RecalibrationMode.OnAlert, ClearLabels = 5 };
        var first = new VectorScaling(options, 3);
        var stream = new KnownClassStream(seed: 24);
        for (int i = 0; i < 3_000; i++)
        {
            (double[] p, int y, _) = stream.Next(0.7, 0.3);
            first.Learn(p, y);
            first.ObserveRules(anyRaised: i == 2_998);
        }
        var second = new VectorScaling(options, 3);
        second.Import(first.Export());

        double[] q1 = new double[3], q2 = new double[3];
        for (int i = 0; i < 500; i++)
        {
            (double[] p, int y, _) = stream.Next(0.7, 0.3);
            first.Apply(p, q1);
            second.Apply(p, q2);
            Assert.Equal(q1, q2);
            first.Learn(p, y);
            second.Learn(p, y);
            first.ObserveRules(false);
            second.ObserveRules(false);
        }
        var (a, b) = (first.Export(), second.Export());
        Assert.Equal(a.Curvature, b.Curvature);
        Assert.Equal(a.Intercepts, b.Intercepts);
        Assert.Equal(a.Slopes, b.Slopes);
        Assert.Equal((a.Labels, a.Engaged, a.ClearStreak), (b.Labels, b.Engaged, b.ClearStreak));
    }

    [Fact]
    public void Import_DamagedState_Refused()
    {
        var layer = Always();
        var good = layer.Export();
        Assert.Throws<ArgumentException>(() => layer.Import(good with { Intercepts = null }));
        Assert.Throws<ArgumentException>(() => layer.Import(good with { Slopes = [1, 1, 50], }));
        Assert.Throws<ArgumentException>(() => layer.Import(good with { Curvature = new double[35] }));
        Assert.Throws<ArgumentException>(() => layer.Import(good with { Intercepts = [0, double.NaN, 0] }));
        // A binary correction's state is not a vector scaling's, and the other way round.
        Assert.Throws<ArgumentException>(() => layer.Import(new RecalibrationState(0, 1, [0, 0, 0], 0, true, 0)));
        Assert.Throws<ArgumentException>(() => new LogOddsRecalibration(new()).Import(good));
    }

    [Fact]
    public void Learn_ProbabilityZero_StaysFinite()
    {
        var layer = Always();
        for (int i = 0; i < 1_000; i++)
        {
            layer.Learn(i % 2 == 0 ? [1.0, 0.0, 0.0] : [0.0, 0.0, 1.0], i % 3);
        }
        var q = new double[3];
        layer.Apply([0.0, 1.0, 0.0], q);
        Assert.All(layer.Parameters, x => Assert.True(double.IsFinite(x.Intercept) && double.IsFinite(x.Slope)));
        Assert.Equal(1.0, q.Sum(), 12);
    }

    [Fact]
    public void Apply_FewerThanMinLabels_ServesRawUnchanged()
    {
        var layer = Always();
        double[] p = [0.1, 0.3, 0.6];
        var q = new double[3];
        for (int i = 0; i < 99; i++)
        {
            layer.Learn(p, 0);
        }
        layer.Apply(p, q);
        Assert.Equal(p, q);

        layer.Learn(p, 0);
        layer.Apply(p, q);
        Assert.True(q[0] > 0.5);
    }

    private static void LearnTable(VectorScaling layer)
    {
        foreach (double[] row in ReferenceData.ReadCsv("vector_scaling_fit.csv").Rows)
        {
            layer.Learn(row.AsSpan(0, 3), (int)row[3]);
        }
    }

    private static void AssertParameters(System.Text.Json.JsonElement reference, VectorScaling layer, bool shiftFree, double tolerance)
    {
        double[] a = reference.GetProperty("a").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        double[] b = reference.GetProperty("b").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        var fitted = layer.Parameters;
        for (int k = 0; k < 3; k++)
        {
            double own = shiftFree ? fitted[k].Intercept - fitted[0].Intercept : fitted[k].Intercept;
            Assert.True(Math.Abs(a[k] - own) <= tolerance, $"a_{k}: scipy {a[k]:F5}, online {own:F5}");
            Assert.True(Math.Abs(b[k] - fitted[k].Slope) <= tolerance, $"b_{k}: scipy {b[k]:F5}, online {fitted[k].Slope:F5}");
        }
    }

    private static VectorScaling Always() => new(new() { Mode = RecalibrationMode.Always }, 3);

    /// <summary>
    /// A 3-class model's probabilities, softmax of scores ~ N(μ_k, 1.3²), and outcomes from the
    /// truth softmax(temperature · ln p + shift · [k = 1]).
    /// </summary>
    private sealed class KnownClassStream(int seed)
    {
        private static readonly double[] Means = [0.4, 0.0, -0.4];
        private readonly Random _rng = new(seed);

        public (double[] P, int Y, double[] PTrue) Next(double temperature, double shift)
        {
            var p = new double[3];
            for (int k = 0; k < 3; k++)
            {
                double u1 = 1.0 - _rng.NextDouble(), u2 = _rng.NextDouble();
                p[k] = Means[k] + 1.3 * Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
            }
            Softmax(p);
            var truth = new double[3];
            for (int k = 0; k < 3; k++)
            {
                truth[k] = temperature * Math.Log(p[k]) + (k == 1 ? shift : 0);
            }
            Softmax(truth);
            double r = _rng.NextDouble();
            int y = r < truth[0] ? 0 : r < truth[0] + truth[1] ? 1 : 2;
            return (p, y, truth);
        }

        private static void Softmax(double[] z)
        {
            double max = z.Max();
            double sum = 0;
            for (int k = 0; k < z.Length; k++)
            {
                z[k] = Math.Exp(z[k] - max);
                sum += z[k];
            }
            for (int k = 0; k < z.Length; k++)
            {
                z[k] /= sum;
            }
        }
    }
}
