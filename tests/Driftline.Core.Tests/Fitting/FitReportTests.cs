using System.Text.Json;
using Driftline.Core.Fitting;
using Xunit;

namespace Driftline.Core.Tests.Fitting;

public sealed class FitReportTests
{
    private static readonly string[] SpectorFeatures = ["GPA", "TUCE", "PSI"];

    [Fact]
    public void TwoSidedPValue_SpectorFit_MatchesPublishedFourDecimalTable()
    {
        LogisticFitResult fit = FitSpector();
        JsonElement published = ReferenceData.ReadJson("fits.json").GetProperty("spector_worked_example").GetProperty("p_value_4dp");

        // Source: the P>|z| column of the worked logit example in W. H. Greene, Econometric
        // Analysis (Spector & Mazzeo data), as statsmodels prints it (fits.json
        // spector_worked_example.p_value_4dp). 4 decimals, so |diff| <= 5e-5.
        Assert.Equal(published.GetProperty("const").GetDouble(), FitReport.TwoSidedPValue(fit.InterceptZ), 5e-5);
        for (int j = 0; j < SpectorFeatures.Length; j++)
        {
            Assert.Equal(published.GetProperty(SpectorFeatures[j]).GetDouble(), FitReport.TwoSidedPValue(fit.ZValues[j]), 5e-5);
        }
    }

    [Theory]
    [InlineData(1.959963984540054, 0.05)]
    [InlineData(-1.959963984540054, 0.05)]
    [InlineData(0.0, 1.0)]
    [InlineData(10.0, 1.5239706048320995e-23)]
    public void TwoSidedPValue_KnownQuantiles_MatchTheNormalTails(double z, double expected)
    {
        // Common practice: 1.96 is the two-sided 5% point of the standard normal; at z = 10
        // the tail is 2·Φ(−10), which 1 − Φ(10) would round to 0.
        Assert.Equal(expected, FitReport.TwoSidedPValue(z), expected * 1e-9);
    }

    [Fact]
    public void Format_SpectorFit_PrintsAlignedTableWithPublishedFigures()
    {
        string text = new FitReport(FitSpector(), SpectorFeatures).Format();
        string[] lines = text.Split('\n');

        // Figures from the published 4-decimal table (fits.json spector_worked_example).
        Assert.StartsWith("term", lines[0], StringComparison.Ordinal);
        Assert.Matches(@"^intercept\s+-13\.0213\s+4\.9313\s+-2\.6405\s+0\.0083$", lines[1]);
        Assert.Matches(@"^GPA\s+2\.8261\s+1\.2629\s+2\.2377\s+0\.0252$", lines[2]);
        Assert.Matches(@"^TUCE\s+0\.0952\s+0\.1416\s+0\.6722\s+0\.5014$", lines[3]);
        Assert.Matches(@"^PSI\s+2\.3787\s+1\.0646\s+2\.2344\s+0\.0255$", lines[4]);
        Assert.All(lines[1..5], line => Assert.Equal(lines[0].Length, line.Length));
        Assert.Matches(@"(?m)^log-likelihood\s+-12\.8896$", text);
        Assert.Matches(@"(?m)^null log-likelihood\s+-20\.5917$", text);
        Assert.Matches(@"(?m)^pseudo R-squared \(McFadden\)\s+0\.3740$", text);
        Assert.Matches(@"(?m)^converged\s+yes$", text);
    }

    [Fact]
    public void Format_TinyCoefficient_UsesExponentNotZero()
    {
        ReferenceTable table = ReferenceData.ReadCsv("anes96.csv");
        LogisticFitResult fit = LogisticNewtonFit.Fit(table.Columns("popul", "PID"), table.Column("label"));

        string text = new FitReport(fit, ["popul", "PID"]).Format();

        Assert.Matches(@"(?m)^popul\s+-?\d\.\d{3}E-0\d\s", text);
    }

    [Fact]
    public void Format_SeparatedFit_SaysWhyItDidNotConverge()
    {
        LogisticFitResult fit = LogisticNewtonFit.Fit([[1.0], [2.0], [3.0], [4.0]], [0, 0, 1, 1]);

        string text = new FitReport(fit).Format();

        Assert.Matches(@"(?m)^x0\s", text);
        Assert.Contains("converged", text, StringComparison.Ordinal);
        Assert.Contains("no: the labels are perfectly separated", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Constructor_WrongNumberOfNames_ThrowsNamingThem()
    {
        ArgumentException error = Assert.Throws<ArgumentException>(() => new FitReport(FitSpector(), ["GPA"]));

        Assert.Equal("featureNames", error.ParamName);
    }

    private static LogisticFitResult FitSpector()
    {
        ReferenceTable table = ReferenceData.ReadCsv("spector.csv");
        return LogisticNewtonFit.Fit(table.Columns(SpectorFeatures), table.Column("label"));
    }
}
