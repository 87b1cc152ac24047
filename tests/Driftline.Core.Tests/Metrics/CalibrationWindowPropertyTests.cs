using CsCheck;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

public sealed class CalibrationWindowPropertyTests
{
    private static readonly Gen<(int Bins, int Capacity, GradedPrediction[] Items, double SplitAt)> Runs =
        from bins in CalibrationProperties.Bins
        from capacity in Gen.Frequency((1, Gen.Int[1, 8]), (3, Gen.Int[1, 500]))
        from items in CalibrationProperties.Prediction(bins).Array[0, 3000]
        from splitAt in Gen.Double.Unit
        select (bins, capacity, items, splitAt);

    [Fact]
    public void Add_RandomSequences_MatchesRecomputationOverLastCapacityAfterEveryAdd()
    {
        Runs.Sample(run =>
        {
            var window = new CalibrationWindow(run.Capacity, run.Bins);
            var bins = new ReliabilityBin[run.Bins];
            NaiveCalibration.Term[] terms = NaiveCalibration.Terms(run.Items, run.Bins);
            for (int i = 0; i < run.Items.Length; i++)
            {
                window.Add(run.Items[i].P, run.Items[i].Y);

                int start = Math.Max(0, i + 1 - run.Capacity);
                ReadOnlySpan<GradedPrediction> held = run.Items.AsSpan(start, i + 1 - start);
                ReadOnlySpan<NaiveCalibration.Term> heldTerms = terms.AsSpan(start, i + 1 - start);
                string where = $"after add {i}";
                Assert.Equal(held.Length, window.Count);
                CalibrationProperties.AssertMatches(NaiveCalibration.Snapshot(held, heldTerms, run.Bins), window.Current, where);
                window.CopyBins(bins);
                CalibrationProperties.AssertMatches(NaiveCalibration.Bins(held, heldTerms, run.Bins), bins, where);
            }
        }, iter: 100);
    }

    [Fact]
    public void CopyAndRestore_RandomSequences_ContinueIdenticallyToOriginal()
    {
        Runs.Sample(run =>
        {
            int split = (int)(run.SplitAt * run.Items.Length);
            var window = new CalibrationWindow(run.Capacity, run.Bins);
            foreach (GradedPrediction g in run.Items.AsSpan(0, split))
            {
                window.Add(g.P, g.Y);
            }

            CalibrationSnapshot atSplit = window.Current;
            CalibrationWindow copy = window.Copy();
            CalibrationWindow restored = CalibrationWindow.Restore(run.Capacity, run.Bins, window.ToArray());
            Assert.Equal(atSplit, restored.Current);

            foreach (GradedPrediction g in run.Items.AsSpan(split))
            {
                window.Add(g.P, g.Y);
            }

            // The copy shares nothing with the original: adds to one leave the other as it was.
            Assert.Equal(atSplit, copy.Current);

            foreach (GradedPrediction g in run.Items.AsSpan(split))
            {
                copy.Add(g.P, g.Y);
                restored.Add(g.P, g.Y);
            }

            // Exact equality, not a tolerance: the sums are integer, so the state is a function of
            // the contents and every route to the same contents gives the same bits.
            Assert.Equal(window.Current, copy.Current);
            Assert.Equal(window.Current, restored.Current);
            Assert.Equal(window.ToArray(), copy.ToArray());
            Assert.Equal(window.ToArray(), restored.ToArray());
            Assert.Equal(Bins(window), Bins(copy));
            Assert.Equal(Bins(window), Bins(restored));
            Assert.Equal(window.Current, CalibrationWindow.Restore(run.Capacity, run.Bins, window.ToArray()).Current);
        }, iter: 200);
    }

    [Fact]
    public void Add_MillionPredictionsThroughWindowOfThousand_EndsWhereRecomputationDoes()
    {
        // Long-run drift: a million adds and 999,000 evictions, with confident misses (p = 0 or 1,
        // log-loss terms of 36) mixed in to make cancellation as hard as it gets.
        const int capacity = 1000;
        const int adds = 1_000_000;
        var window = new CalibrationWindow(capacity);
        var random = new Random(4242);
        var last = new GradedPrediction[capacity];
        for (int i = 0; i < adds; i++)
        {
            double p = random.Next(20) switch
            {
                0 => 0.0,
                1 => 1.0,
                2 => 0.30000000000000004,
                3 => 1e-300,
                _ => random.NextDouble(),
            };
            int y = random.Next(2);
            window.Add(p, y);
            last[i % capacity] = new GradedPrediction(p, y);
        }

        GradedPrediction[] held = window.ToArray();
        // adds is a multiple of capacity, so the oldest held prediction sits in last[0].
        Assert.Equal(last, held);
        CalibrationProperties.AssertMatches(NaiveCalibration.Snapshot(held, 10), window.Current, "after 1,000,000 adds");
        CalibrationProperties.AssertMatches(NaiveCalibration.Bins(held, 10), Bins(window), "after 1,000,000 adds");
        // Zero drift, not just small drift: the same contents added once give the same bits.
        Assert.Equal(CalibrationWindow.Restore(capacity, 10, held).Current, window.Current);
    }

    private static ReliabilityBin[] Bins(CalibrationWindow window)
    {
        var bins = new ReliabilityBin[window.Bins];
        window.CopyBins(bins);
        return bins;
    }
}
