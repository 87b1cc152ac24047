using System.Reflection;
using System.Text.Json;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>One vector of metrics_fixed.json with the scikit-learn values computed for it.</summary>
internal sealed record MetricsCase(
    string Name,
    double[] Probabilities,
    int[] Labels,
    double LogLoss,
    double Brier,
    double[] CurveProbTrue5,
    double[] CurveProbPred5,
    double EceLeftClosed,
    double EceRightClosed,
    ReferenceBin[] LeftClosedBins,
    ReferenceBin[] RightClosedBins);

/// <summary>One bin of the reference ECE table; means are NaN for an empty bin.</summary>
internal sealed record ReferenceBin(int Index, double Lower, double Upper, long Count, double MeanP, double MeanY);

/// <summary>Reads the embedded Reference/metrics_fixed.json (see Reference/README.md for its source).</summary>
internal static class MetricsReference
{
    /// <summary>Names a check's source in failure messages.</summary>
    public const string Source = "scikit-learn 1.2.1 via Reference/metrics_fixed.json";

    private static readonly Lazy<IReadOnlyDictionary<string, MetricsCase>> Cases = new(Load);

    /// <summary>The fixed 20-value vector (no probability on a bin edge).</summary>
    public static MetricsCase Main20 => Cases.Value["main_vector_20"];

    /// <summary>The 10-value edge-case vector (0, 0.5 and 1 on edges).</summary>
    public static MetricsCase EdgeCase10 => Cases.Value["edge_case_vector_10"];

    /// <summary>Both vectors by name, for theories.</summary>
    public static MetricsCase Get(string name) => Cases.Value[name];

    /// <summary>Fails with the quantity and its source named when |expected − actual| exceeds the tolerance.</summary>
    public static void AssertClose(double expected, double actual, double tolerance, string what)
    {
        if (double.IsNaN(expected) && double.IsNaN(actual))
        {
            return;
        }

        if (!(Math.Abs(expected - actual) <= tolerance))
        {
            Assert.Fail($"{what}: expected {expected:R} ({Source}), got {actual:R}, tolerance {tolerance:R}.");
        }
    }

    /// <summary>Checks count, log-loss, Brier, left-closed ECE and the means of a snapshot over the whole vector, to 1e-12.</summary>
    public static void AssertSnapshot(MetricsCase c, CalibrationSnapshot s)
    {
        const double tolerance = 1e-12;
        Assert.True(s.IsReady);
        Assert.Equal(c.Probabilities.Length, s.Count);
        AssertClose(c.LogLoss, s.LogLoss, tolerance, "log_loss");
        AssertClose(c.Brier, s.Brier, tolerance, "brier_score_loss");
        AssertClose(c.EceLeftClosed, s.Ece, tolerance, "ece_10_bins_left_closed");
        // The means are not in the file; they follow from its vectors directly.
        AssertClose(c.Probabilities.Average(), s.MeanP, tolerance, "mean of probabilities");
        AssertClose(c.Labels.Average(), s.MeanY, tolerance, "mean of labels");
        AssertClose(c.Probabilities.Average() - c.Labels.Average(), s.CalibrationInTheLarge, tolerance, "mean p - mean y");
    }

    /// <summary>Checks edges and counts exactly and the per-bin means to 1e-12 against a reference table.</summary>
    public static void AssertBins(ReferenceBin[] expected, ReadOnlySpan<ReliabilityBin> actual, string what)
    {
        const double tolerance = 1e-12;
        Assert.Equal(expected.Length, actual.Length);
        for (int k = 0; k < expected.Length; k++)
        {
            Assert.Equal(expected[k].Index, actual[k].Index);
            Assert.Equal(expected[k].Lower, actual[k].Lower);
            Assert.Equal(expected[k].Upper, actual[k].Upper);
            Assert.Equal(expected[k].Count, actual[k].Count);
            AssertClose(expected[k].MeanP, actual[k].MeanP, tolerance, $"{what} {k} mean_p");
            AssertClose(expected[k].MeanY, actual[k].MeanY, tolerance, $"{what} {k} mean_y");
        }
    }

    private static IReadOnlyDictionary<string, MetricsCase> Load()
    {
        using Stream stream = Assembly.GetExecutingAssembly().GetManifestResourceStream("metrics_fixed.json")
            ?? throw new InvalidOperationException("Embedded resource metrics_fixed.json is missing.");
        using JsonDocument document = JsonDocument.Parse(stream);
        var result = new Dictionary<string, MetricsCase>();
        foreach (string name in new[] { "main_vector_20", "edge_case_vector_10" })
        {
            JsonElement v = document.RootElement.GetProperty(name);
            JsonElement curve = v.GetProperty("calibration_curve_n_bins_5_uniform");
            result[name] = new MetricsCase(
                name,
                Doubles(v.GetProperty("probabilities")),
                v.GetProperty("labels").EnumerateArray().Select(e => e.GetInt32()).ToArray(),
                v.GetProperty("log_loss").GetDouble(),
                v.GetProperty("brier_score_loss").GetDouble(),
                Doubles(curve.GetProperty("prob_true")),
                Doubles(curve.GetProperty("prob_pred")),
                v.GetProperty("ece_10_bins_left_closed").GetDouble(),
                v.GetProperty("ece_10_bins_right_closed").GetDouble(),
                Bins(v.GetProperty("ece_10_bins_left_closed_bins")),
                Bins(v.GetProperty("ece_10_bins_right_closed_bins")));
        }

        return result;
    }

    private static double[] Doubles(JsonElement array) => array.EnumerateArray().Select(e => e.GetDouble()).ToArray();

    private static ReferenceBin[] Bins(JsonElement array) => array.EnumerateArray()
        .Select(b =>
        {
            long n = b.GetProperty("n").GetInt64();
            return new ReferenceBin(
                b.GetProperty("bin").GetInt32(),
                b.GetProperty("lo").GetDouble(),
                b.GetProperty("hi").GetDouble(),
                n,
                n == 0 ? double.NaN : b.GetProperty("mean_p").GetDouble(),
                n == 0 ? double.NaN : b.GetProperty("mean_y").GetDouble());
        })
        .ToArray();
}
