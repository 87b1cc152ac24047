using CsCheck;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

public sealed class CalibrationTotalsTests
{
    [Fact]
    public void Add_RandomSequences_MatchesRecomputationAndRestoresExactly()
    {
        (from bins in CalibrationProperties.Bins
         from items in CalibrationProperties.Prediction(bins).Array[0, 3000]
         from splitAt in Gen.Double.Unit
         select (bins, items, splitAt))
        .Sample(run =>
        {
            int split = (int)(run.splitAt * run.items.Length);
            var totals = new CalibrationTotals(run.bins);
            foreach (GradedPrediction g in run.items.AsSpan(0, split))
            {
                totals.Add(g.P, g.Y);
            }

            CalibrationSnapshot atSplit = totals.Current;
            CalibrationTotals copy = totals.Copy();
            CalibrationTotals restored = CalibrationTotals.Restore(totals.ToState());
            CalibrationProperties.AssertMatches(NaiveCalibration.Snapshot(run.items.AsSpan(0, split), run.bins), atSplit, "at split");

            foreach (GradedPrediction g in run.items.AsSpan(split))
            {
                totals.Add(g.P, g.Y);
            }

            Assert.Equal(atSplit, copy.Current);
            foreach (GradedPrediction g in run.items.AsSpan(split))
            {
                copy.Add(g.P, g.Y);
                restored.Add(g.P, g.Y);
            }

            CalibrationProperties.AssertMatches(NaiveCalibration.Snapshot(run.items, run.bins), totals.Current, "at end");
            var bins = new ReliabilityBin[run.bins];
            totals.CopyBins(bins);
            CalibrationProperties.AssertMatches(NaiveCalibration.Bins(run.items, run.bins), bins, "at end");
            Assert.Equal(totals.Current, copy.Current);
            Assert.Equal(totals.Current, restored.Current);
            Assert.Equal(run.items.Length, totals.Count);
        }, iter: 100);
    }

    [Fact]
    public void ToState_AfterAdds_RoundTripsThroughRestore()
    {
        var totals = new CalibrationTotals(bins: 4);
        totals.Add(0.1, 0);
        totals.Add(0.75, 1);
        totals.Add(1.0, 1);

        CalibrationTotalsState state = totals.ToState();
        CalibrationTotals restored = CalibrationTotals.Restore(state);

        Assert.Equal(4, state.Bins);
        Assert.Equal(3, state.Count);
        Assert.Equal(2, state.Positives);
        Assert.Equal([1L, 0L, 0L, 2L], state.BinCounts);
        Assert.Equal(totals.Current, restored.Current);
        Assert.Equal(totals.ToState().BinProbabilitySums, restored.ToState().BinProbabilitySums);
    }

    [Fact]
    public void Restore_InconsistentState_ThrowsSayingWhy()
    {
        var totals = new CalibrationTotals(bins: 2);
        totals.Add(0.2, 1);
        CalibrationTotalsState good = totals.ToState();

        CalibrationTotalsState[] bad =
        [
            good with { Count = 2 },
            good with { Positives = 2 },
            good with { BinCounts = [1L] },
            good with { Bins = 0 },
            good with { BinCounts = [0L, 1L] },
            good with { ProbabilitySum = good.ProbabilitySum + 1 },
            good with { LogLossSum = -1 },
        ];

        foreach (CalibrationTotalsState state in bad)
        {
            var e = Assert.Throws<ArgumentException>(() => CalibrationTotals.Restore(state));
            Assert.Equal("state", e.ParamName);
            Assert.Contains("inconsistent", e.Message, StringComparison.Ordinal);
        }
    }
}
