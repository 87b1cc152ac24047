using Driftline.Core.Detectors;
using Driftline.Core.Fitting;
using Xunit;

namespace Driftline.Core.Tests.Detectors;

public sealed class CalibrationCusumDetectorTests
{
    [Fact]
    public void Threshold_Defaults_IsLogOfArlTimesAlternatives()
    {
        var detector = new CalibrationCusumDetector();

        Assert.Equal(13, detector.Alternatives.Count);
        Assert.Equal(Math.Log(1e6 * 13), detector.Threshold, 1e-12);
        Assert.Equal(DetectorState.NotReady, detector.State);
    }

    [Fact]
    public void Add_OneLabel_AccumulatesTheHandComputedLikelihoodRatio()
    {
        // p = 0.5 (η = 0) against q = σ(0.5): y = 1 gives ln(q / p) = 0.5 − softplus(0.5) + ln 2
        // = 0.219; y = 0 gives ln((1 − q)/(1 − p)) = −0.281, and the CUSUM stops at 0.
        var detector = new CalibrationCusumDetector(alternatives: [new RecalibrationAlternative(0.5, 1)]);

        detector.Add(0.5, 1);
        Assert.Equal(Math.Log(LogisticMath.Probability(0.5) / 0.5), detector.Statistic, 1e-14);
        Assert.Equal(0.21906, detector.Statistic, 5e-5);

        detector.Add(0.5, 0);
        Assert.Equal(0, detector.Statistic);
        Assert.Equal(DetectorState.Stable, detector.State);
    }

    [Fact]
    public void Add_ShiftUp_RaisedByAnUnderPredictingAlternative()
    {
        var detector = new CalibrationCusumDetector();
        var random = new Random(41);
        while (!detector.IsRaised)
        {
            double p = TestStreams.Probability(random);
            detector.Add(p, TestStreams.Outcome(random, TestStreams.Recalibrated(p, 0.4, 1)));
        }

        RecalibrationAlternative raisedBy = detector.RaisedBy!.Value;
        Assert.True(raisedBy.Intercept > 0, raisedBy.Describe());
        Assert.Contains("under-predicting", raisedBy.Describe(), StringComparison.Ordinal);
    }

    [Fact]
    public void Add_SlopeHalfOnSymmetricProbabilities_RaisedByAnOverConfidentAlternative()
    {
        // Symmetric around 0.5, a slope break moves no mean; only the slope CUSUMs see it.
        var detector = new CalibrationCusumDetector();
        var random = new Random(43);
        while (!detector.IsRaised)
        {
            double p = 0.02 + (0.96 * random.NextDouble());
            detector.Add(p, TestStreams.Outcome(random, TestStreams.Recalibrated(p, 0, 0.5)));
        }

        RecalibrationAlternative raisedBy = detector.RaisedBy!.Value;
        Assert.True(raisedBy.Slope < 1 && raisedBy.Intercept == 0, raisedBy.Describe());
        Assert.Contains("over-confident", raisedBy.Describe(), StringComparison.Ordinal);
    }

    [Fact]
    public void Add_CalibrationReturns_ClearsOnceAndRestartsEveryCusum()
    {
        var detector = new CalibrationCusumDetector();
        var random = new Random(47);
        for (int i = 0; i < 20_000; i++)
        {
            double p = TestStreams.Probability(random);
            detector.Add(p, TestStreams.Outcome(random, TestStreams.Recalibrated(p, 0.4, 1)));
        }

        Assert.True(detector.IsRaised);
        Assert.Equal(1, detector.Detections);
        Assert.Equal(DetectorState.Drift, detector.State);

        // Capped at h while raised: a long break does not make clearing wait longer.
        Assert.True(detector.Statistic <= detector.Threshold);

        // Clears once every CUSUM has lost half of h; calibrated labels from here on.

        int labels = 0;
        while (detector.IsRaised)
        {
            double p = TestStreams.Probability(random);
            detector.Add(p, TestStreams.Outcome(random, p));
            labels++;
            Assert.True(labels < 20_000, "still raised after 20,000 calibrated labels");
        }

        Assert.Equal(DetectorState.Stable, detector.State);
        Assert.Equal(1, detector.Clears);
        Assert.Equal(0, detector.Statistic);
        Assert.Null(detector.RaisedBy);
    }

    [Fact]
    public void Add_SustainedBreak_HoldsOneAlarmWithoutFlapping()
    {
        // Under a +0.4 break the +1 CUSUM has negative drift (+1 is further from the truth than
        // calibration is), so an alarm that relied on it alone would clear and re-raise; the
        // +0.5 CUSUM stays pinned at h and holds the alarm. 30,000 broken labels, one alarm.
        var detector = new CalibrationCusumDetector(alternatives: [new(1, 1), new(0.5, 1), new(0.25, 1)]);
        var random = new Random(53);
        for (int i = 0; i < 30_000; i++)
        {
            double p = TestStreams.Probability(random);
            detector.Add(p, TestStreams.Outcome(random, TestStreams.Recalibrated(p, 0.4, 1)));
        }

        Assert.Equal(1, detector.Detections);
        Assert.Equal(0, detector.Clears);
        Assert.NotEqual(1.0, detector.RaisedBy!.Value.Intercept);
    }

    [Fact]
    public void Add_ClaimedCertaintyThatMisses_StaysFinite()
    {
        var detector = new CalibrationCusumDetector();

        detector.Add(0.0, 1);
        Assert.True(double.IsFinite(detector.Statistic));
        Assert.True(detector.Statistic > 0);
    }

    [Fact]
    public void Add_OutcomeNotBinary_ThrowsAndLeavesDetectorUnchanged()
    {
        var detector = new CalibrationCusumDetector();
        detector.Add(0.3, 1);
        double before = detector.Statistic;

        Assert.Throws<ArgumentOutOfRangeException>(() => detector.Add(0.3, 2));
        Assert.Throws<ArgumentOutOfRangeException>(() => detector.Add(1.5, 1));
        Assert.Equal(1, detector.Count);
        Assert.Equal(before, detector.Statistic);
    }

    [Fact]
    public void Constructor_CalibrationItselfOrNoAlternatives_Throws()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new CalibrationCusumDetector(alternatives: [new RecalibrationAlternative(0, 1)]));
        Assert.Throws<ArgumentException>(() => new CalibrationCusumDetector(alternatives: []));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CalibrationCusumDetector(labelsPerFalseAlarm: 1));
        Assert.Throws<ArgumentOutOfRangeException>(() => new CalibrationCusumDetector(clearFraction: 1));
    }

    [Fact]
    public void Describe_EachDirection_NamesItInPlainWords()
    {
        Assert.Equal("log-odds +0.25 (under-predicting)", new RecalibrationAlternative(0.25, 1).Describe());
        Assert.Equal("log-odds -1 (over-predicting)", new RecalibrationAlternative(-1, 1).Describe());
        Assert.Equal("slope 0.5 (over-confident)", new RecalibrationAlternative(0, 0.5).Describe());
        Assert.Equal("slope 2 (under-confident)", new RecalibrationAlternative(0, 2).Describe());
    }
}
