using CsCheck;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

public sealed class RollingAucTests
{
    [Fact]
    public void Value_SmallWindowWithTies_MatchesTheHandCount()
    {
        // Positives 0.9, 0.7; negatives 0.8, 0.7, 0.2. 0.9 beats all three (3); 0.7 loses to
        // 0.8, ties 0.7 (½) and beats 0.2 (1). U = 4.5 of 6 pairs.
        var auc = new RollingAuc(capacity: 5);
        auc.Add(0.9, 1);
        auc.Add(0.8, 0);
        auc.Add(0.7, 1);
        auc.Add(0.7, 0);
        auc.Add(0.2, 0);
        Assert.Equal(9, auc.HalfPairs);
        Assert.Equal(0.75, auc.Value);

        // Evicting 0.9 (positive) and adding 0.1 (positive): 0.7 gives 1.5, 0.1 gives 0. U = 1.5 of 6.
        auc.Add(0.1, 1);
        Assert.Equal(3, auc.HalfPairs);
        Assert.Equal(0.25, auc.Value);
    }

    [Fact]
    public void Value_OneClassOnly_IsNotReady()
    {
        var auc = new RollingAuc(capacity: 3);
        Assert.True(double.IsNaN(auc.Value));
        auc.Add(0.4, 1);
        auc.Add(0.6, 1);
        Assert.True(double.IsNaN(auc.Value));
        auc.Add(0.5, 0);
        Assert.Equal(0.5, auc.Value);

        // The window slides past its only negative: not ready again.
        auc.Add(0.5, 1);
        auc.Add(0.5, 1);
        auc.Add(0.5, 1);
        Assert.True(double.IsNaN(auc.Value));
    }

    [Fact]
    public void Add_Invalid_ThrowsAndLeavesWindowUnchanged()
    {
        var auc = new RollingAuc(capacity: 3);
        auc.Add(0.4, 1);
        Assert.Throws<ArgumentOutOfRangeException>(() => auc.Add(double.NaN, 0));
        Assert.Throws<ArgumentOutOfRangeException>(() => auc.Add(0.5, -1));
        Assert.Equal(1, auc.Count);
    }

    [Fact]
    public void Add_RandomSequences_MatchesMannWhitneyRecomputedOverTheWindow()
    {
        // Scores on a coarse grid so ties are common, or fine so they are rare.
        Gen<(int Capacity, (double P, int Y)[] Items)> runs =
            from capacity in Gen.Frequency((1, Gen.Int[1, 6]), (3, Gen.Int[1, 300]))
            from levels in Gen.OneOf(Gen.Const(5), Gen.Const(50), Gen.Const(1_000_000))
            from items in Gen.Select(Gen.Int[0, levels], Gen.Int[0, 1]).Array[0, 1500]
            select (capacity, items.Select(item => ((double)item.Item1 / levels, item.Item2)).ToArray());

        runs.Sample(run =>
        {
            var auc = new RollingAuc(run.Capacity);
            for (int i = 0; i < run.Items.Length; i++)
            {
                auc.Add(run.Items[i].P, run.Items[i].Y);
                int start = Math.Max(0, i + 1 - run.Capacity);
                (long halfPairs, long positives, long negatives) = MannWhitney(run.Items.AsSpan(start, i + 1 - start));
                Assert.Equal(halfPairs, auc.HalfPairs);
                Assert.Equal(positives, auc.Positives);
                Assert.Equal(negatives, auc.Negatives);
                double expected = positives == 0 || negatives == 0 ? double.NaN : halfPairs / (2.0 * positives * negatives);
                Assert.Equal(expected, auc.Value);
            }
        }, iter: 60);
    }

    [Fact]
    public void Of_SmallSetWithTies_MatchesTheHandCount()
    {
        // The hand count of the first test: U = 4.5 of 6 pairs.
        Assert.Equal(0.75, RollingAuc.Of([new(0.9, 1), new(0.8, 0), new(0.7, 1), new(0.7, 0), new(0.2, 0)]));
        Assert.True(double.IsNaN(RollingAuc.Of([new(0.4, 1), new(0.6, 1)])));
        Assert.True(double.IsNaN(RollingAuc.Of([])));
        // -0.0 is a score of 0 and ties with 0.0 (IEEE 754: they compare equal), as in the window.
        Assert.Equal(0.5, RollingAuc.Of([new(-0.0, 1), new(0.0, 0)]));
        Assert.Throws<ArgumentOutOfRangeException>(() => RollingAuc.Of([new(0.4, 1), new(double.NaN, 0)]));
    }

    [Fact]
    public void Of_RandomSets_EqualsMannWhitneyRecomputedAndTheWindowToTheBit()
    {
        Gen<(double P, int Y)[]> sets =
            from levels in Gen.OneOf(Gen.Const(3), Gen.Const(50), Gen.Const(1_000_000))
            from items in Gen.Select(Gen.Int[0, levels], Gen.Int[0, 1]).Array[0, 600]
            select items.Select(item => ((double)item.Item1 / levels, item.Item2)).ToArray();

        sets.Sample(items =>
        {
            var window = new RollingAuc(Math.Max(1, items.Length));
            foreach (var (p, y) in items)
            {
                window.Add(p, y);
            }
            (long halfPairs, long positives, long negatives) = MannWhitney(items);
            double expected = positives == 0 || negatives == 0 ? double.NaN : halfPairs / (2.0 * positives * negatives);
            double value = RollingAuc.Of(items.Select(i => new GradedPrediction(i.P, i.Y)).ToArray());
            Assert.Equal(expected, value);
            Assert.Equal(BitConverter.DoubleToInt64Bits(window.Value), BitConverter.DoubleToInt64Bits(value));
        }, iter: 200);
    }

    [Fact]
    public void Copy_MidStream_ContinuesIdenticallyAndIndependently()
    {
        var random = new Random(3);
        var original = new RollingAuc(capacity: 200);
        for (int i = 0; i < 500; i++)
        {
            original.Add(Math.Round(random.NextDouble(), 2), random.Next(2));
        }

        RollingAuc copy = original.Copy();
        RollingAuc untouched = original.Copy();
        long atCopy = untouched.HalfPairs;
        for (int i = 0; i < 500; i++)
        {
            double p = Math.Round(random.NextDouble(), 2);
            int y = random.Next(2);
            original.Add(p, y);
            copy.Add(p, y);
            Assert.Equal(original.HalfPairs, copy.HalfPairs);
            Assert.Equal(original.Value, copy.Value);
        }

        Assert.Equal(atCopy, untouched.HalfPairs);
        Assert.Equal(200, untouched.Count);
    }

    // From scratch: every positive–negative pair, 2 for a right order, 1 for a tie.
    private static (long HalfPairs, long Positives, long Negatives) MannWhitney(ReadOnlySpan<(double P, int Y)> items)
    {
        long halfPairs = 0;
        long positives = 0;
        foreach ((double P, int Y) positive in items)
        {
            if (positive.Y != 1)
            {
                continue;
            }

            positives++;
            foreach ((double P, int Y) negative in items)
            {
                if (negative.Y == 0)
                {
                    halfPairs += positive.P > negative.P ? 2 : positive.P == negative.P ? 1 : 0;
                }
            }
        }

        return (halfPairs, positives, items.Length - positives);
    }
}
