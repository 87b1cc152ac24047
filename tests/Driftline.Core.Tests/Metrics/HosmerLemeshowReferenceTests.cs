using System.Text.Json;
using Driftline.Core.Fitting;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>
/// The Hosmer–Lemeshow test against the table computed outside the project with numpy and scipy
/// (Reference/README.md, hosmer_lemeshow.json) on the probabilities of the anes96 fit recorded
/// in fits.json, evaluated here from those coefficients on anes96.csv.
/// </summary>
public sealed class HosmerLemeshowReferenceTests
{
    private static readonly string[] Features =
        ["popul", "TVnews", "selfLR", "ClinLR", "DoleLR", "PID", "age", "educ", "income"];

    private static readonly JsonElement Reference = ReferenceData.ReadJson("hosmer_lemeshow.json");

    [Fact]
    public void Compute_Anes96Fit_MatchesNumpyTableStatisticAndScipyPValue()
    {
        HosmerLemeshowResult result = HosmerLemeshow.Compute(Anes96FittedPredictions());

        // Source: hosmer_lemeshow.json (Hosmer & Lemeshow 1980 with numpy's stable sort and
        // array_split; scipy.stats.chi2.sf for the p-value). The probabilities are recomputed
        // from 17-digit coefficients, so sums agree to rounding: relative 1e-10.
        Assert.Equal(Reference.GetProperty("df").GetInt32(), result.DegreesOfFreedom);
        AssertRelative(Reference.GetProperty("statistic").GetDouble(), result.Statistic, 1e-10, "statistic");
        AssertRelative(Reference.GetProperty("statistic_two_class_form").GetDouble(), result.Statistic, 1e-10, "2 x G form");
        AssertRelative(Reference.GetProperty("p_value").GetDouble(), result.PValue, 1e-10, "p-value");

        JsonElement[] groups = [.. Reference.GetProperty("groups").EnumerateArray()];
        Assert.Equal(groups.Length, result.Groups.Count);
        for (int g = 0; g < groups.Length; g++)
        {
            JsonElement expected = groups[g];
            HosmerLemeshowGroup actual = result.Groups[g];
            string where = $"group {g + 1}";
            Assert.Equal(expected.GetProperty("n").GetInt32(), actual.Count);
            Assert.Equal(expected.GetProperty("observed_pos").GetDouble(), actual.ObservedPositive);
            Assert.Equal(expected.GetProperty("observed_neg").GetDouble(), actual.ObservedNegative);
            AssertRelative(expected.GetProperty("expected_pos").GetDouble(), actual.ExpectedPositive, 1e-10, where + " expected_pos");
            AssertRelative(expected.GetProperty("expected_neg").GetDouble(), actual.ExpectedNegative, 1e-10, where + " expected_neg");
            AssertRelative(expected.GetProperty("p_min").GetDouble(), actual.MinP, 1e-10, where + " p_min");
            AssertRelative(expected.GetProperty("p_max").GetDouble(), actual.MaxP, 1e-10, where + " p_max");
        }
    }

    [Fact]
    public void Compute_Anes96Fit_DiffersFromTheQuantileCutVariant()
    {
        // Source: hosmer_lemeshow.json variant_pandas_qcut. The grouping rule matters: the same
        // probabilities cut at interpolated deciles give other group sizes and 2.599, not 2.470.
        HosmerLemeshowResult result = HosmerLemeshow.Compute(Anes96FittedPredictions());
        JsonElement variant = Reference.GetProperty("variant_pandas_qcut");

        Assert.NotEqual(variant.GetProperty("statistic").GetDouble(), result.Statistic, 1e-3);
        Assert.Equal([95, 95, 95, 95, 94, 94, 94, 94, 94, 94], result.Groups.Select(g => g.Count));
    }

    private static GradedPrediction[] Anes96FittedPredictions()
    {
        JsonElement fit = ReferenceData.ReadJson("fits.json").GetProperty("anes96");
        double intercept = fit.GetProperty("intercept").GetDouble();
        double[] weights = [.. Features.Select(f => fit.GetProperty("coefficients").GetProperty(f).GetDouble())];
        ReferenceTable table = ReferenceData.ReadCsv("anes96.csv");
        double[][] x = table.Columns(Features);
        double[] y = table.Column("label");
        var predictions = new GradedPrediction[x.Length];
        for (int i = 0; i < x.Length; i++)
        {
            double eta = intercept;
            for (int j = 0; j < weights.Length; j++)
            {
                eta += weights[j] * x[i][j];
            }

            predictions[i] = new GradedPrediction(LogisticMath.Probability(eta), (int)y[i]);
        }

        return predictions;
    }

    private static void AssertRelative(double expected, double actual, double relative, string what)
    {
        double tolerance = relative * Math.Max(Math.Abs(expected), 1e-300);
        Assert.True(Math.Abs(expected - actual) <= tolerance, $"{what}: expected {expected:R}, got {actual:R} (relative tolerance {relative}).");
    }
}
