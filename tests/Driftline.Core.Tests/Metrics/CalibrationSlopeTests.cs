using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>
/// Calibration intercept and slope. The independent reference is a property of maximum
/// likelihood: a logistic fit with an intercept satisfies Σ (y − p) = 0 and Σ (y − p) · x_j = 0,
/// hence Σ (y − p) · logit(p) = 0, which are the score equations of y ~ a + b · logit(p) at
/// a = 0, b = 1. So on its own training data a maximum-likelihood fit has calibration intercept 0
/// and slope 1 exactly (the likelihood is strictly concave, so that root is the estimate).
/// </summary>
public sealed class CalibrationSlopeTests
{
    private const double Tolerance = 1e-8;

    public static TheoryData<string> Fits => new("spector", "anes96");

    [Theory]
    [MemberData(nameof(Fits))]
    public void Fit_ProbabilitiesOfMaximumLikelihoodFit_InterceptZeroSlopeOne(string name)
    {
        LogisticCase c = LogisticReference.Get(name);
        GradedPrediction[] graded = Graded(c.FittedProbabilities(), c.Labels);

        CalibrationFit fit = CalibrationSlope.Fit(graded);

        // Coefficients from fits.json (statsmodels Logit, score gradient below 5e-12 there).
        Assert.Equal(CalibrationFitStatus.Ready, fit.Status);
        Assert.Equal(c.Labels.Length, fit.Count);
        Assert.Equal(0.0, fit.Intercept, Tolerance);
        Assert.Equal(1.0, fit.Slope, Tolerance);
    }

    [Theory]
    [InlineData("spector", 0.5, 2.0)]
    [InlineData("anes96", -0.3, 0.25)] // far from the start at (0, 1): step halving has work to do
    [InlineData("anes96", 1.5, 4.0)]
    public void Fit_LogitsShiftedAndScaled_RecoversTheTransform(string name, double intercept, double slope)
    {
        // Same argument after a change of variable: if logit(q) = (logit(p) − a) / b, the model
        // y ~ a' + b' · logit(q) contains the reference fit at a' = a, b' = b, and the score
        // equations still hold there.
        LogisticCase c = LogisticReference.Get(name);
        double[] q = c.FittedProbabilities()
            .Select(p => 1.0 / (1.0 + Math.Exp(-(CalibrationSlope.Logit(p) - intercept) / slope)))
            .ToArray();
        // The argument needs logit(q) unclipped; a transform that pushed q to 0 or 1 would lose it.
        Assert.All(q, qi => Assert.InRange(Math.Abs(CalibrationSlope.Logit(qi)), 0, 30));

        CalibrationFit fit = CalibrationSlope.Fit(Graded(q, c.Labels));

        Assert.True(fit.IsReady);
        Assert.Equal(intercept, fit.Intercept, 1e-7);
        Assert.Equal(slope, fit.Slope, 1e-7);
    }

    [Theory]
    [MemberData(nameof(Fits))]
    public void CalibrationTotals_ProbabilitiesOfReferenceFit_MatchReferenceLogLossAndBrier(string name)
    {
        LogisticCase c = LogisticReference.Get(name);
        double[] p = c.FittedProbabilities();
        var totals = new CalibrationTotals();
        for (int i = 0; i < p.Length; i++)
        {
            totals.Add(p[i], c.Labels[i]);
        }

        // training_metrics in fits.json: scikit-learn log_loss and mean (p - y)^2 of the fit.
        Assert.Equal(c.MeanLogLoss, totals.Current.LogLoss, 1e-12);
        Assert.Equal(c.Brier, totals.Current.Brier, 1e-12);
        // Also from the score equation Σ (y − p) = 0: calibration-in-the-large is 0 on training data.
        Assert.Equal(0.0, totals.Current.CalibrationInTheLarge, 1e-12);
    }

    [Fact]
    public void Fit_WindowOverloads_UseTheHeldPredictions()
    {
        LogisticCase c = LogisticReference.Spector;
        double[] p = c.FittedProbabilities();
        var window = new CalibrationWindow(p.Length);
        var timed = new TimeWindow(TimeSpan.FromDays(1), p.Length);
        var start = new DateTimeOffset(2026, 3, 4, 0, 0, 0, TimeSpan.Zero);
        for (int i = 0; i < p.Length; i++)
        {
            window.Add(p[i], c.Labels[i]);
            timed.Add(start.AddSeconds(i), p[i], c.Labels[i]);
        }

        CalibrationFit direct = CalibrationSlope.Fit(Graded(p, c.Labels));

        Assert.Equal(direct, CalibrationSlope.Fit(window));
        Assert.Equal(direct, CalibrationSlope.Fit(timed));
    }

    [Fact]
    public void Fit_FewerThanMinimum_IsTooFewSamples()
    {
        GradedPrediction[] few = [new(0.2, 0), new(0.7, 1), new(0.4, 1), new(0.6, 0)];

        CalibrationFit fit = CalibrationSlope.Fit(few, minimumCount: 5);

        Assert.Equal(CalibrationFitStatus.TooFewSamples, fit.Status);
        Assert.False(fit.IsReady);
        Assert.True(double.IsNaN(fit.Intercept) && double.IsNaN(fit.Slope));
        Assert.True(CalibrationSlope.Fit(few, minimumCount: 4).IsReady);
    }

    [Fact]
    public void Fit_Empty_IsTooFewSamples() =>
        Assert.Equal(CalibrationFitStatus.TooFewSamples, CalibrationSlope.Fit([]).Status);

    [Fact]
    public void Fit_OneClass_IsOneClass()
    {
        GradedPrediction[] allPositive = Enumerable.Range(1, 20).Select(i => new GradedPrediction(i / 21.0, 1)).ToArray();

        Assert.Equal(CalibrationFitStatus.OneClass, CalibrationSlope.Fit(allPositive).Status);
    }

    [Fact]
    public void Fit_SameProbabilityEverywhere_IsNoSpread()
    {
        GradedPrediction[] flat = Enumerable.Range(0, 20).Select(i => new GradedPrediction(0.3, i % 3 == 0 ? 1 : 0)).ToArray();

        Assert.Equal(CalibrationFitStatus.NoSpread, CalibrationSlope.Fit(flat).Status);
    }

    [Theory]
    [InlineData(0.5)]  // complete separation: every positive above every negative
    [InlineData(0.45)] // quasi-complete: the classes meet at one logit but do not cross
    public void Fit_OutcomesSeparatedByProbability_IsSeparated(double boundary)
    {
        GradedPrediction[] separated = Enumerable.Range(0, 20)
            .Select(i => i < 10 ? new GradedPrediction(i < 9 ? 0.05 * i : 0.45, 0) : new GradedPrediction(i == 10 ? boundary : 0.05 * i, 1))
            .ToArray();

        Assert.Equal(CalibrationFitStatus.Separated, CalibrationSlope.Fit(separated).Status);
    }

    [Fact]
    public void Fit_InvalidPrediction_Throws()
    {
        GradedPrediction[] bad = [new(0.2, 0), new(1.2, 1)];

        var e = Assert.Throws<ArgumentOutOfRangeException>(() => CalibrationSlope.Fit(bad));
        Assert.Equal("p", e.ParamName);
    }

    [Fact]
    public void Logit_ExactZeroAndOne_ClippedToFinite()
    {
        Assert.Equal(-Math.Log(1 / 2.220446049250313e-16 - 1), CalibrationSlope.Logit(0.0), 1e-12);
        Assert.Equal(0.0, CalibrationSlope.Logit(0.5));
        Assert.True(double.IsFinite(CalibrationSlope.Logit(1.0)));
    }

    private static GradedPrediction[] Graded(double[] p, int[] y) => p.Zip(y, (pi, yi) => new GradedPrediction(pi, yi)).ToArray();
}
