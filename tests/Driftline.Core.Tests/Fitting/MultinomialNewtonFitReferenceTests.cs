using System.Text.Json;
using Driftline.Core.Fitting;
using Xunit;

namespace Driftline.Core.Tests.Fitting;

/// <summary>
/// The joint multinomial fit against published values: Reference/mnlogit_anes96.json, the
/// multinomial logit of party identification on anes96.csv fitted by Stata 11, as statsmodels
/// 0.13.5 ships it in its own tests (Anes.mnlogit_basezero; see Reference/README.md).
/// </summary>
public sealed class MultinomialNewtonFitReferenceTests
{
    private static readonly JsonElement Reference = ReferenceData.ReadJson("mnlogit_anes96.json");

    private static readonly string[] Features = ["logpopul", "selfLR", "age", "educ", "income"];

    private static MultinomialFitResult FitAnes96()
    {
        ReferenceTable table = ReferenceData.ReadCsv("anes96.csv");
        // As the reference file says: logpopul = ln(popul + 0.1).
        double[][] rows = table.Rows.Select(r => new[]
        {
            Math.Log(r[table.IndexOf("popul")] + 0.1), r[table.IndexOf("selfLR")], r[table.IndexOf("age")],
            r[table.IndexOf("educ")], r[table.IndexOf("income")],
        }).ToArray();
        int[] labels = table.Column("PID").Select(v => (int)v).ToArray();
        return MultinomialNewtonFit.Fit(rows, labels, 7, featureNames: Features);
    }

    [Fact]
    public void Fit_Anes96PartyIdentification_ReproducesStataCoefficientsAndStandardErrors()
    {
        MultinomialFitResult fit = FitAnes96();

        Assert.True(fit.Converged, fit.Problem);
        for (int k = 1; k < 7; k++)
        {
            string c = k.ToString(System.Globalization.CultureInfo.InvariantCulture);
            JsonElement coef = Reference.GetProperty("params_by_class_1_to_6").GetProperty(c);
            JsonElement bse = Reference.GetProperty("bse_by_class_1_to_6").GetProperty(c);
            // Tolerances from the issue: coefficients to 1e-4, standard errors to 1e-3.
            Assert.Equal(coef.GetProperty("const").GetDouble(), fit.Intercepts[k], 1e-4);
            Assert.Equal(bse.GetProperty("const").GetDouble(), fit.InterceptStandardErrors[k], 1e-3);
            for (int j = 0; j < Features.Length; j++)
            {
                Assert.Equal(coef.GetProperty(Features[j]).GetDouble(), fit.Coefficients[k][j], 1e-4);
                Assert.Equal(bse.GetProperty(Features[j]).GetDouble(), fit.StandardErrors[k][j], 1e-3);
            }
        }

        Assert.All(fit.Coefficients[0], w => Assert.Equal(0, w));
    }

    [Fact]
    public void Fit_Anes96PartyIdentification_ReproducesTheLogLikelihoods()
    {
        MultinomialFitResult fit = FitAnes96();

        Assert.Equal(Reference.GetProperty("llf").GetDouble(), fit.LogLikelihood, 1e-4);
        Assert.Equal(Reference.GetProperty("llnull").GetDouble(), fit.NullLogLikelihood, 1e-6);
        Assert.Equal(Reference.GetProperty("prsquared").GetDouble(), fit.McFaddenPseudoRSquared, 1e-8);
    }

    [Fact]
    public void Predict_AtTheOptimum_ProbabilitiesSumToOneAndGiveThePublishedMeanLogLoss()
    {
        MultinomialFitResult fit = FitAnes96();
        ReferenceTable table = ReferenceData.ReadCsv("anes96.csv");
        double total = 0;
        Span<double> p = stackalloc double[7];
        foreach (double[] r in table.Rows)
        {
            double[] x = [Math.Log(r[table.IndexOf("popul")] + 0.1), r[table.IndexOf("selfLR")], r[table.IndexOf("age")], r[table.IndexOf("educ")], r[table.IndexOf("income")]];
            fit.Predict(x, p);
            double sum = 0;
            foreach (double v in p)
            {
                sum += v;
            }

            Assert.Equal(1.0, sum, 1e-12);
            total -= Math.Log(p[(int)r[table.IndexOf("PID")]]);
        }

        Assert.Equal(Reference.GetProperty("mean_log_loss_at_optimum").GetDouble(), total / table.Rows.Count, 1e-7);
    }

    [Fact]
    public void Fit_TwoClasses_IsTheBinaryLogit()
    {
        // K = 2 is the binary logit: the same estimates as statsmodels Logit (fits.json "spector").
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        MultinomialFitResult fit = MultinomialNewtonFit.Fit(table.Columns("GPA", "TUCE", "PSI"), table.Column("label").Select(v => (int)v).ToArray(), 2);
        JsonElement spector = ReferenceData.ReadJson("fits.json").GetProperty("spector");

        Assert.True(fit.Converged, fit.Problem);
        Assert.Equal(spector.GetProperty("intercept").GetDouble(), fit.Intercepts[1], 1e-8);
        Assert.Equal(spector.GetProperty("coefficients").GetProperty("GPA").GetDouble(), fit.Coefficients[1][0], 1e-8);
        Assert.Equal(spector.GetProperty("log_likelihood").GetDouble(), fit.LogLikelihood, 1e-8);
    }

    [Fact]
    public void Fit_DuplicatedFeature_NamesItAsCollinear()
    {
        ReferenceTable table = ReferenceData.ReadCsv("anes96.csv");
        double[][] rows = table.Rows.Select(r => new[] { r[table.IndexOf("age")], 2 * r[table.IndexOf("age")] }).ToArray();
        MultinomialFitResult fit = MultinomialNewtonFit.Fit(rows, table.Column("PID").Select(v => (int)v).ToArray(), 7, featureNames: ["age", "age twice"]);

        Assert.False(fit.Converged);
        Assert.Contains("'age twice' is constant or a linear combination", fit.Problem, StringComparison.Ordinal);
    }
}
