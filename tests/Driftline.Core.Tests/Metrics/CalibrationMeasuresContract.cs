using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>
/// Behaviour every calibration accumulator shares, rerun for each by a derived class. Reference
/// values: scikit-learn 1.2.1 in Reference/metrics_fixed.json.
/// </summary>
public abstract class CalibrationMeasuresContract
{
    public static TheoryData<string> Vectors => new("main_vector_20", "edge_case_vector_10");

    /// <summary>An empty accumulator with room for at least <paramref name="room"/> predictions.</summary>
    private protected abstract ICalibrationMeasures Create(int room, int bins = 10);

    [Fact]
    public void Current_Empty_IsNotReadyWithNaNValues()
    {
        CalibrationSnapshot s = Create(5).Current;

        Assert.False(s.IsReady);
        Assert.Equal(CalibrationSnapshot.Empty, s);
        Assert.True(double.IsNaN(s.LogLoss) && double.IsNaN(s.Brier) && double.IsNaN(s.Ece) && double.IsNaN(s.MeanP));
    }

    [Theory]
    [MemberData(nameof(Vectors))]
    public void Current_ReferenceVector_MatchesScikitLearn(string vector)
    {
        MetricsCase c = MetricsReference.Get(vector);
        ICalibrationMeasures sut = Create(c.Probabilities.Length);
        for (int i = 0; i < c.Probabilities.Length; i++)
        {
            sut.Add(c.Probabilities[i], c.Labels[i]);
        }

        MetricsReference.AssertSnapshot(c, sut.Current);
    }

    [Theory]
    [MemberData(nameof(Vectors))]
    public void CopyBins_ReferenceVector_MatchesLeftClosedTable(string vector)
    {
        MetricsCase c = MetricsReference.Get(vector);
        ICalibrationMeasures sut = Create(c.Probabilities.Length);
        for (int i = 0; i < c.Probabilities.Length; i++)
        {
            sut.Add(c.Probabilities[i], c.Labels[i]);
        }

        var bins = new ReliabilityBin[sut.Bins];
        sut.CopyBins(bins);

        // ece_10_bins_left_closed_bins: per-bin n, mean p, mean y.
        MetricsReference.AssertBins(c.LeftClosedBins, bins, "left-closed bin");
    }

    [Theory]
    [InlineData(double.NaN, 0, "p")]
    [InlineData(double.PositiveInfinity, 1, "p")]
    [InlineData(double.NegativeInfinity, 0, "p")]
    [InlineData(-1e-300, 0, "p")]
    [InlineData(1.0000000000000002, 1, "p")]
    [InlineData(0.5, 2, "y")]
    [InlineData(0.5, -1, "y")]
    public void Add_InvalidPrediction_ThrowsNamingItAndChangesNothing(double p, int y, string parameter)
    {
        ICalibrationMeasures sut = Create(3);
        sut.Add(0.2, 0);
        CalibrationSnapshot before = sut.Current;

        var e = Assert.Throws<ArgumentOutOfRangeException>(() => sut.Add(p, y));

        Assert.Equal(parameter, e.ParamName);
        Assert.Equal(before, sut.Current);
    }

    [Fact]
    public void Copy_ThenAddToEither_LeavesTheOtherUnchanged()
    {
        ICalibrationMeasures original = Create(10);
        original.Add(0.3, 1);
        ICalibrationMeasures copy = original.Copy();
        CalibrationSnapshot before = original.Current;

        copy.Add(0.9, 0);
        Assert.Equal(before, original.Current);

        original.Add(0.9, 0);
        Assert.Equal(copy.Current, original.Current);
    }

    [Fact]
    public void Current_ConfidentMisses_ClippedToFiniteLogLoss()
    {
        ICalibrationMeasures sut = Create(2);
        sut.Add(1.0, 0);
        sut.Add(0.0, 1);

        // -ln(2.220446049250313e-16) = 52 ln 2, the scikit-learn eps='auto' bound.
        Assert.Equal(52 * Math.Log(2), sut.Current.LogLoss, 1e-12);
        Assert.Equal(1.0, sut.Current.Brier);
        Assert.Equal(1.0, sut.Current.Ece);
    }

    [Fact]
    public void CopyBins_DestinationTooShort_Throws()
    {
        ICalibrationMeasures sut = Create(4);

        var e = Assert.Throws<ArgumentException>(() => sut.CopyBins(new ReliabilityBin[9]));

        Assert.Equal("destination", e.ParamName);
    }

    [Fact]
    public void CopyBins_FourBins_UseLinspaceEdgesAndNaNForEmpty()
    {
        ICalibrationMeasures sut = Create(4, bins: 4);
        sut.Add(0.1, 0);
        var bins = new ReliabilityBin[6];

        sut.CopyBins(bins);

        Assert.Equal(new ReliabilityBin(0, 0.0, 0.25, 1, 0.1, 0.0), bins[0]);
        Assert.Equal(0, bins[3].Count);
        Assert.True(double.IsNaN(bins[3].MeanP) && double.IsNaN(bins[3].MeanY));
        Assert.Equal(1.0, bins[3].Upper);
        Assert.Equal(default, bins[4]); // beyond Bins: untouched
    }
}
