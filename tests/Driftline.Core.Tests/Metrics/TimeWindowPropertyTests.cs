using CsCheck;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

public sealed class TimeWindowPropertyTests
{
    private static readonly DateTimeOffset Start = new(2026, 1, 1, 0, 0, 0, TimeSpan.Zero);

    /// <summary>One step: advance the clock, then add a prediction stamped at clock + jitter, or only advance.</summary>
    private readonly record struct Step(int ClockSeconds, int JitterSeconds, bool AdvanceOnly, GradedPrediction Prediction);

    private static readonly Gen<(int Span, int MaxCount, int Bins, Step[] Steps, double SplitAt)> Runs =
        from span in Gen.Int[1, 100]
        from maxCount in Gen.Frequency((1, Gen.Int[1, 5]), (3, Gen.Int[1, 300]))
        from bins in CalibrationProperties.Bins
        from steps in Gen.Select(Gen.Int[0, 10], Gen.Int[-(span * 3 / 2) - 1, 2], Gen.Int[0, 9], CalibrationProperties.Prediction(bins),
            (clock, jitter, kind, g) => new Step(clock, jitter, kind == 0, g)).Array[0, 2000]
        from splitAt in Gen.Double.Unit
        select (span, maxCount, bins, steps, splitAt);

    [Fact]
    public void Add_RandomTimedSequences_MatchesModelAndRecomputationAfterEveryStep()
    {
        Runs.Sample(run =>
        {
            var window = new TimeWindow(TimeSpan.FromSeconds(run.Span), run.MaxCount, run.Bins);
            var model = new Model(run.Span, run.MaxCount);
            var bins = new ReliabilityBin[run.Bins];
            int clock = 0;
            for (int i = 0; i < run.Steps.Length; i++)
            {
                Step s = run.Steps[i];
                clock += s.ClockSeconds;
                if (s.AdvanceOnly)
                {
                    window.AdvanceTo(Start.AddSeconds(clock));
                    model.Advance(clock);
                }
                else
                {
                    int t = clock + s.JitterSeconds;
                    bool held = window.Add(Start.AddSeconds(t), s.Prediction.P, s.Prediction.Y);
                    Assert.Equal(model.Add(t, s.Prediction), held);
                }

                GradedPrediction[] expected = model.Contents();
                string where = $"after step {i}";
                Assert.Equal(expected.Length, window.Count);
                Assert.Equal(expected, window.ToArray().Select(x => new GradedPrediction(x.P, x.Y)).ToArray());
                CalibrationProperties.AssertMatches(NaiveCalibration.Snapshot(expected, run.Bins), window.Current, where);
                window.CopyBins(bins);
                CalibrationProperties.AssertMatches(NaiveCalibration.Bins(expected, run.Bins), bins, where);
            }
        }, iter: 40);
    }

    [Fact]
    public void CopyAndRestore_RandomTimedSequences_ContinueIdenticallyToOriginal()
    {
        Runs.Sample(run =>
        {
            int split = (int)(run.SplitAt * run.Steps.Length);
            var window = new TimeWindow(TimeSpan.FromSeconds(run.Span), run.MaxCount, run.Bins);
            int clock = Apply(window, run.Steps.AsSpan(0, split), 0);

            CalibrationSnapshot atSplit = window.Current;
            TimeWindow copy = window.Copy();
            TimeWindow restored = TimeWindow.Restore(window.Span, window.MaxCount, window.Bins, window.Latest, window.ToArray());
            Assert.Equal(atSplit, restored.Current);

            Apply(window, run.Steps.AsSpan(split), clock);
            Assert.Equal(atSplit, copy.Current);
            Apply(copy, run.Steps.AsSpan(split), clock);
            Apply(restored, run.Steps.AsSpan(split), clock);

            Assert.Equal(window.Latest, copy.Latest);
            Assert.Equal(window.Latest, restored.Latest);
            Assert.Equal(window.ToArray(), copy.ToArray());
            Assert.Equal(window.ToArray(), restored.ToArray());
            Assert.Equal(window.Current, copy.Current);
            Assert.Equal(window.Current, restored.Current);
        }, iter: 200);
    }

    private static int Apply(TimeWindow window, ReadOnlySpan<Step> steps, int clock)
    {
        foreach (Step s in steps)
        {
            clock += s.ClockSeconds;
            if (s.AdvanceOnly)
            {
                window.AdvanceTo(Start.AddSeconds(clock));
            }
            else
            {
                window.Add(Start.AddSeconds(clock + s.JitterSeconds), s.Prediction.P, s.Prediction.Y);
            }
        }

        return clock;
    }

    /// <summary>
    /// The documented rules as plain list operations: hold (latest − span, latest]; refuse what is
    /// already out; when full, keep the newest by (time, arrival).
    /// </summary>
    private sealed class Model(int span, int maxCount)
    {
        private readonly List<(int Time, long Arrival, GradedPrediction Prediction)> _held = [];
        private int? _latest;
        private long _arrivals;

        public void Advance(int time)
        {
            if (_latest is null || time > _latest)
            {
                _latest = time;
                _held.RemoveAll(x => x.Time <= _latest - span);
            }
        }

        public bool Add(int time, GradedPrediction prediction)
        {
            Advance(time);
            if (time <= _latest - span)
            {
                return false;
            }

            if (_held.Count == maxCount)
            {
                var oldest = _held.MinBy(x => (x.Time, x.Arrival));
                if (time < oldest.Time)
                {
                    return false;
                }

                _held.Remove(oldest);
            }

            _held.Add((time, _arrivals++, prediction));
            return true;
        }

        public GradedPrediction[] Contents() =>
            _held.OrderBy(x => x.Time).ThenBy(x => x.Arrival).Select(x => x.Prediction).ToArray();
    }
}
