using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>
/// Eviction, the reliability curve and the bin edges against scikit-learn 1.2.1 values in
/// Reference/metrics_fixed.json (ECE as Naeini et al. 2015 / Guo et al. 2017 define it). What
/// every accumulator must match is in <see cref="CalibrationMeasuresContract"/>.
/// </summary>
public sealed class CalibrationReferenceTests
{
    private const double Tolerance = 1e-12;

    public static TheoryData<string> Vectors => new("main_vector_20", "edge_case_vector_10");

    [Theory]
    [MemberData(nameof(Vectors))]
    public void CalibrationWindowCurrent_ReferenceVectorAfterEvictingOthers_MatchesScikitLearn(string vector)
    {
        MetricsCase c = MetricsReference.Get(vector);
        var window = new CalibrationWindow(c.Probabilities.Length);
        var random = new Random(20260304);
        for (int i = 0; i < 1000; i++)
        {
            window.Add(random.NextDouble(), random.Next(2));
        }

        Feed(c, window.Add);

        MetricsReference.AssertSnapshot(c, window.Current);
        MetricsReference.AssertBins(c.LeftClosedBins, Bins(window.CopyBins, window.Bins), "window bin");
    }

    [Theory]
    [MemberData(nameof(Vectors))]
    public void ReliabilityCurveCompute_FiveBinsRightClosed_MatchesCalibrationCurve(string vector)
    {
        MetricsCase c = MetricsReference.Get(vector);

        ReliabilityBin[] curve = ReliabilityCurve.Compute(c.Probabilities, c.Labels, bins: 5, rightClosed: true);

        // scikit-learn calibration_curve(n_bins=5, strategy='uniform') drops empty bins.
        ReliabilityBin[] nonEmpty = curve.Where(b => b.Count > 0).ToArray();
        Assert.Equal(c.CurveProbTrue5.Length, nonEmpty.Length);
        for (int i = 0; i < nonEmpty.Length; i++)
        {
            MetricsReference.AssertClose(c.CurveProbTrue5[i], nonEmpty[i].MeanY, Tolerance, $"calibration_curve prob_true[{i}]");
            MetricsReference.AssertClose(c.CurveProbPred5[i], nonEmpty[i].MeanP, Tolerance, $"calibration_curve prob_pred[{i}]");
        }
    }

    [Theory]
    [MemberData(nameof(Vectors))]
    public void ReliabilityCurveCompute_TenBinsEitherConvention_MatchesReferenceTable(string vector)
    {
        MetricsCase c = MetricsReference.Get(vector);

        ReliabilityBin[] left = ReliabilityCurve.Compute(c.Probabilities, c.Labels);
        ReliabilityBin[] right = ReliabilityCurve.Compute(c.Probabilities, c.Labels, rightClosed: true);

        MetricsReference.AssertBins(c.LeftClosedBins, left, "left-closed bin");
        MetricsReference.AssertBins(c.RightClosedBins, right, "right-closed bin");
        MetricsReference.AssertClose(c.EceLeftClosed, ReliabilityCurve.ExpectedCalibrationError(left), Tolerance, "ece_10_bins_left_closed");
        MetricsReference.AssertClose(c.EceRightClosed, ReliabilityCurve.ExpectedCalibrationError(right), Tolerance, "ece_10_bins_right_closed");
    }

    [Fact]
    public void BinEdges_TenBins_EqualNumpyLinspaceBitForBit()
    {
        var edges = new BinEdges(10);

        // bin_edges in Reference/metrics_fixed.json: numpy.linspace(0, 1, 11) as printed by repr.
        double[] expected = [0, 0.1, 0.2, 0.30000000000000004, 0.4, 0.5, 0.6000000000000001, 0.7000000000000001, 0.8, 0.9, 1];
        for (int k = 0; k < 10; k++)
        {
            Assert.Equal(expected[k], edges.Lower(k));
            Assert.Equal(expected[k + 1], edges.Upper(k));
        }
    }

    private static void Feed(MetricsCase c, Action<double, int> add)
    {
        for (int i = 0; i < c.Probabilities.Length; i++)
        {
            add(c.Probabilities[i], c.Labels[i]);
        }
    }

    private delegate void CopyBinsInto(Span<ReliabilityBin> destination);

    private static ReliabilityBin[] Bins(CopyBinsInto copy, int bins)
    {
        var result = new ReliabilityBin[bins];
        copy(result);
        return result;
    }
}
