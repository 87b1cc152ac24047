using Driftline.Core.Fitting;
using Xunit;

namespace Driftline.Core.Tests.Fitting;

/// <summary>
/// The stable logistic pieces at margins where the textbook formulas return NaN, ±∞ or 0.
/// Expected values are closed forms (common practice), evaluated where they are exact.
/// </summary>
public sealed class LogisticMathTests
{
    [Theory]
    [InlineData(1000.0, 1.0, 0.0)]
    [InlineData(1000.0, 0.0, -1000.0)]
    [InlineData(-1000.0, 1.0, -1000.0)]
    [InlineData(-1000.0, 0.0, 0.0)]
    [InlineData(-1e300, 1.0, -1e300)]
    public void LogLikelihood_ExtremeMargin_IsFiniteAndExact(double eta, double label, double expected)
    {
        double value = LogisticMath.LogLikelihood(eta, label);

        Assert.True(double.IsFinite(value), $"got {value}");
        Assert.Equal(expected, value, Math.Abs(expected) * 1e-15);
    }

    [Fact]
    public void LogLikelihood_LargeCorrectMargin_KeepsItsDigits()
    {
        // log(1 / (1 + e^−40)) = −log1p(e^−40) ≈ −e^−40; log(p) of the rounded p gives 0.
        double expected = -Math.Exp(-40);

        Assert.Equal(expected, LogisticMath.LogLikelihood(40, 1), Math.Abs(expected) * 1e-14);
        Assert.Equal(expected, LogisticMath.LogLikelihood(-40, 0), Math.Abs(expected) * 1e-14);
    }

    [Theory]
    [InlineData(0.3, 1.0)]
    [InlineData(-2.5, 0.0)]
    [InlineData(-2.5, 1.0)]
    public void LogLikelihood_ModerateMargin_EqualsLogOfProbability(double eta, double label)
    {
        double p = 1 / (1 + Math.Exp(-eta));
        double expected = label == 1 ? Math.Log(p) : Math.Log(1 - p);

        Assert.Equal(expected, LogisticMath.LogLikelihood(eta, label), 1e-14);
    }

    [Fact]
    public void Probability_ExtremeMargins_AreZeroOrOneNotNaN()
    {
        Assert.Equal(1.0, LogisticMath.Probability(1000));
        Assert.Equal(0.0, LogisticMath.Probability(-1000));
        Assert.Equal(0.5, LogisticMath.Probability(0));
        Assert.Equal(Math.Exp(-40), LogisticMath.Probability(-40), Math.Exp(-40) * 1e-14);
    }

    [Fact]
    public void Variance_LargeMargin_StaysPositive()
    {
        // p(1 − p) from a rounded p is exactly 0 here; the true value is about e^−40.
        Assert.Equal(Math.Exp(-40), LogisticMath.Variance(40), Math.Exp(-40) * 1e-14);
        Assert.Equal(Math.Exp(-40), LogisticMath.Variance(-40), Math.Exp(-40) * 1e-14);
        Assert.Equal(0.25, LogisticMath.Variance(0));
        Assert.Equal(0.0, LogisticMath.Variance(1000));
    }

    [Theory]
    [InlineData(1e-20, 1e-20)]
    [InlineData(1e-10, 9.9999999995e-11)]
    [InlineData(1.0, 0.69314718055994531)]
    public void Log1P_SmallArgument_IsAccurate(double x, double expected)
    {
        // log(1 + x) = x − x²/2 + … ; at x = 1e−10 Math.Log(1 + x) is off by 8e−18 (8e−8 relative).
        Assert.Equal(expected, LogisticMath.Log1P(x), expected * 1e-15);
    }

    [Fact]
    public void Softplus_ExtremeMargins_AreFinite()
    {
        Assert.Equal(1000.0, LogisticMath.Softplus(1000));
        Assert.Equal(0.0, LogisticMath.Softplus(-1000));
        Assert.Equal(Math.Log(2), LogisticMath.Softplus(0), 1e-16);
    }
}
