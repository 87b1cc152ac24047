using Driftline.Core.Fitting;
using MathNet.Numerics.LinearAlgebra;
using Xunit;

namespace Driftline.Core.Tests.Fitting;

/// <summary>The batch fit's edge cases: separation, collinearity, bad input, options.</summary>
public sealed class LogisticNewtonFitTests
{
    // Four rows split at x = 2.5: complete separation, no finite maximum-likelihood estimate.
    private static readonly double[][] SeparatedRows = [[1], [2], [3], [4]];
    private static readonly double[] SeparatedLabels = [0, 0, 1, 1];

    [Fact]
    public void Fit_CompletelySeparatedLabels_ReportsSeparationNotConverged()
    {
        LogisticFitResult fit = LogisticNewtonFit.Fit(SeparatedRows, SeparatedLabels);

        Assert.False(fit.Converged);
        Assert.NotNull(fit.Problem);
        Assert.Contains("perfectly separated by the features", fit.Problem, StringComparison.Ordinal);
        Assert.Contains("add ridge (L2) or more data", fit.Problem, StringComparison.Ordinal);
        Assert.DoesNotContain("quasi", fit.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void Fit_QuasiSeparatedLabels_ReportsSeparationNotConverged()
    {
        // Only the two rows at x = 3 overlap; every other row is on its own side of x = 3,
        // so the slope runs off to infinity while the log-likelihood levels off at 2·log(1/2).
        double[][] rows = [[1], [2], [3], [3], [4], [5]];
        double[] labels = [0, 0, 0, 1, 1, 1];

        LogisticFitResult fit = LogisticNewtonFit.Fit(rows, labels);

        Assert.False(fit.Converged);
        Assert.Contains("perfectly separated by the features", fit.Problem, StringComparison.Ordinal);
        Assert.Contains("quasi-complete", fit.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void Fit_SeparatedLabelsWithRidge_ConvergesToPenalizedMaximum()
    {
        const double ridge = 1.0;

        LogisticFitResult fit = LogisticNewtonFit.Fit(SeparatedRows, SeparatedLabels, ridge: ridge);

        Assert.True(fit.Converged, fit.Problem);
        Assert.Null(fit.Problem);
        Assert.InRange(fit.Coefficients[0], 0.1, 10);

        // Common practice: the penalized maximum solves Σ(y − p) = 0 and Σ x(y − p) = λ·w.
        // Checked here from the fitted numbers alone, independently of the fitter's score.
        double interceptScore = 0;
        double slopeScore = 0;
        for (int i = 0; i < SeparatedRows.Length; i++)
        {
            double x = SeparatedRows[i][0];
            double p = 1 / (1 + Math.Exp(-(fit.Intercept + (fit.Coefficients[0] * x))));
            interceptScore += SeparatedLabels[i] - p;
            slopeScore += x * (SeparatedLabels[i] - p);
        }

        Assert.Equal(0, interceptScore, 1e-10);
        Assert.Equal(ridge * fit.Coefficients[0], slopeScore, 1e-10);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(1.0)]
    public void Fit_OneLabelOnly_ReportsNoFiniteIntercept(double ridge)
    {
        LogisticFitResult fit = LogisticNewtonFit.Fit(SeparatedRows, [1, 1, 1, 1], ridge: ridge);

        Assert.False(fit.Converged);
        Assert.Contains("label 1", fit.Problem, StringComparison.Ordinal);
        Assert.Contains("both labels", fit.Problem, StringComparison.Ordinal);
        Assert.True(double.IsNaN(fit.Intercept));
        Assert.Equal(0, fit.NullLogLikelihood);
    }

    [Fact]
    public void Fit_DuplicatedColumn_ReportsCollinearFeatureByIndex()
    {
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        double[][] rows = table.Columns("GPA", "TUCE", "PSI", "GPA");

        LogisticFitResult fit = LogisticNewtonFit.Fit(rows, table.Column("label"));

        Assert.False(fit.Converged);
        Assert.Contains("collinear", fit.Problem, StringComparison.Ordinal);
        Assert.Contains("feature 3", fit.Problem, StringComparison.Ordinal);
        Assert.DoesNotContain("separated", fit.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void Fit_ConstantColumn_ReportsItDuplicatesTheIntercept()
    {
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        double[][] rows = table.Rows.Select(row => new[] { 7.0, row[0] }).ToArray();

        LogisticFitResult fit = LogisticNewtonFit.Fit(rows, table.Column("label"));

        Assert.False(fit.Converged);
        Assert.Contains("feature 0 is constant", fit.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void Fit_DuplicatedColumnWithRidge_SplitsTheCoefficientEvenly()
    {
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        double[][] rows = table.Columns("GPA", "TUCE", "PSI", "GPA");

        LogisticFitResult fit = LogisticNewtonFit.Fit(rows, table.Column("label"), ridge: 0.01);

        // The ridge picks the smallest-norm split of GPA's effect over its two copies.
        Assert.True(fit.Converged, fit.Problem);
        Assert.Equal(fit.Coefficients[0], fit.Coefficients[3], 1e-8);
    }

    [Fact]
    public void Fit_IntegerWeights_EqualDuplicatedRows()
    {
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        double[][] rows = table.Columns("GPA", "TUCE", "PSI");
        double[] labels = table.Column("label");

        // Weight 2 on rows 0–4, weight 0 on row 5, versus the data with rows 0–4 repeated and
        // row 5 removed: the same likelihood, so the same fit.
        double[] weights = Enumerable.Range(0, rows.Length).Select(i => i < 5 ? 2.0 : i == 5 ? 0.0 : 1.0).ToArray();
        int[] expanded = Enumerable.Range(0, rows.Length).Where(i => i != 5).Concat(Enumerable.Range(0, 5)).ToArray();

        LogisticFitResult weighted = LogisticNewtonFit.Fit(rows, labels, weights: weights);
        LogisticFitResult repeated = LogisticNewtonFit.Fit(expanded.Select(i => rows[i]).ToArray(), expanded.Select(i => labels[i]).ToArray());

        Assert.True(weighted.Converged, weighted.Problem);
        Assert.Equal(repeated.Intercept, weighted.Intercept, 1e-9);
        for (int j = 0; j < 3; j++)
        {
            Assert.Equal(repeated.Coefficients[j], weighted.Coefficients[j], 1e-9);
            Assert.Equal(repeated.StandardErrors[j], weighted.StandardErrors[j], 1e-9);
        }

        Assert.Equal(repeated.LogLikelihood, weighted.LogLikelihood, 1e-9);
        Assert.Equal(repeated.NullLogLikelihood, weighted.NullLogLikelihood, 1e-9);
    }

    [Fact]
    public void Fit_NoFeatures_FitsTheLogitOfTheBaseRate()
    {
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        double[][] rows = table.Rows.Select(_ => Array.Empty<double>()).ToArray();

        LogisticFitResult fit = LogisticNewtonFit.Fit(rows, table.Column("label"));

        // Common practice: the intercept-only estimate is logit(11/32) with standard error
        // 1/sqrt(n·p·(1 − p)); 11 of the 32 rows are labelled 1.
        const double p = 11.0 / 32;
        Assert.True(fit.Converged, fit.Problem);
        Assert.Empty(fit.Coefficients);
        Assert.Equal(Math.Log(p / (1 - p)), fit.Intercept, 1e-12);
        Assert.Equal(1 / Math.Sqrt(32 * p * (1 - p)), fit.InterceptStandardError, 1e-12);
        Assert.Equal(fit.NullLogLikelihood, fit.LogLikelihood, 1e-12);
    }

    [Fact]
    public void Fit_FarStartWhereFullNewtonStepsDiverge_ConvergesByStepHalving()
    {
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        double[][] rows = table.Columns("GPA");
        double[] labels = table.Column("label");

        // From intercept 0, slope 3, undamped Newton jumps to about (16303, −7604) and the
        // log-likelihood falls from −186 to −108430, after which the Hessian underflows:
        // only the halving keeps this fit alive.
        LogisticFitResult fromFar = LogisticNewtonFit.Fit(rows, labels, start: [0, 3]);
        LogisticFitResult fromNull = LogisticNewtonFit.Fit(rows, labels);

        Assert.True(fromFar.Converged, fromFar.Problem);
        Assert.Equal(fromNull.Intercept, fromFar.Intercept, 1e-8);
        Assert.Equal(fromNull.Coefficients[0], fromFar.Coefficients[0], 1e-8);
    }

    [Fact]
    public void Fit_IterationLimitReached_ReportsNoConvergence()
    {
        ReferenceTable table = ReferenceData.ReadCsv("anes96.csv");
        double[][] rows = table.Columns("popul", "TVnews", "selfLR", "ClinLR", "DoleLR", "PID", "age", "educ", "income");

        LogisticFitResult fit = LogisticNewtonFit.Fit(rows, table.Column("label"), maxIterations: 2);

        Assert.False(fit.Converged);
        Assert.Equal(2, fit.Iterations);
        Assert.Contains("no convergence after 2 Newton steps", fit.Problem, StringComparison.Ordinal);
    }

    [Fact]
    public void Fit_NoRows_ThrowsNamingTheParameter()
    {
        ArgumentException fromRows = Assert.Throws<ArgumentException>(() => LogisticNewtonFit.Fit(Array.Empty<double[]>(), []));
        ArgumentException fromMatrix = Assert.Throws<ArgumentException>(() => LogisticNewtonFit.Fit(Matrix<double>.Build.Dense(0, 2), []));

        Assert.Equal("rows", fromRows.ParamName);
        Assert.Equal("features", fromMatrix.ParamName);
    }

    [Fact]
    public void Fit_LabelNotZeroOrOne_ThrowsNamingLabels()
    {
        ArgumentException error = Assert.Throws<ArgumentException>(() => LogisticNewtonFit.Fit(SeparatedRows, [0, 1, 2, 1]));

        Assert.Equal("labels", error.ParamName);
        Assert.Contains("Label 2", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Fit_LabelCountMismatch_ThrowsNamingLabels()
    {
        ArgumentException error = Assert.Throws<ArgumentException>(() => LogisticNewtonFit.Fit(SeparatedRows, [0, 1]));

        Assert.Equal("labels", error.ParamName);
    }

    [Fact]
    public void Fit_NonFiniteFeature_ThrowsNamingTheRow()
    {
        ArgumentException error = Assert.Throws<ArgumentException>(
            () => LogisticNewtonFit.Fit([[1], [double.NaN], [3], [4]], SeparatedLabels));

        Assert.Equal("rows", error.ParamName);
        Assert.Contains("row 1", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Fit_RaggedRows_ThrowsNamingRows()
    {
        ArgumentException error = Assert.Throws<ArgumentException>(
            () => LogisticNewtonFit.Fit([[1], [2, 5], [3], [4]], SeparatedLabels));

        Assert.Equal("rows", error.ParamName);
    }

    [Theory]
    [InlineData(-1.0)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    public void Fit_BadWeight_ThrowsNamingWeights(double weight)
    {
        ArgumentException error = Assert.Throws<ArgumentException>(
            () => LogisticNewtonFit.Fit(SeparatedRows, SeparatedLabels, weights: [1, weight, 1, 1]));

        Assert.Equal("weights", error.ParamName);
    }

    [Fact]
    public void Fit_AllWeightsZero_ThrowsNamingWeights()
    {
        ArgumentException error = Assert.Throws<ArgumentException>(
            () => LogisticNewtonFit.Fit(SeparatedRows, SeparatedLabels, weights: [0, 0, 0, 0]));

        Assert.Equal("weights", error.ParamName);
    }

    [Theory]
    [InlineData(-0.5)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    public void Fit_BadRidge_ThrowsOutOfRange(double ridge)
    {
        ArgumentOutOfRangeException error = Assert.Throws<ArgumentOutOfRangeException>(
            () => LogisticNewtonFit.Fit(SeparatedRows, SeparatedLabels, ridge: ridge));

        Assert.Equal("ridge", error.ParamName);
    }

    [Fact]
    public void Fit_StartOfWrongLength_ThrowsNamingStart()
    {
        ArgumentException error = Assert.Throws<ArgumentException>(
            () => LogisticNewtonFit.Fit(SeparatedRows, SeparatedLabels, ridge: 1, start: [0]));

        Assert.Equal("start", error.ParamName);
    }
}
