using Driftline.Core.Features;
using Driftline.Core.Fitting;
using Driftline.Core.Learning;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Learning;

public sealed class OnlineLearnerTests
{
    private static DriftlineOptions Options(LearnerKind learner, double halfLife = 20_000) => new()
    {
        Model = new ModelOptions { Learner = learner, HashBits = 14, HalfLifeLabels = halfLife },
        Monitor = new MonitorOptions { Window = 2_000 },
        Alerts = [],
    };

    [Theory]
    [InlineData(nameof(LearnerKind.Ftrl))]
    [InlineData(nameof(LearnerKind.AdaGrad))]
    public void ProgressiveLogLoss_StationaryStream_IsWithinTwoPercentOfBatchFit(string learner)
    {
        // A property of the method, checked on data: on a stationary stream the online model's
        // progressive (score-then-learn) log-loss approaches the in-sample log-loss of the
        // maximum-likelihood fit on the whole stream, and its probabilities are calibrated.
        const int n = 60_000;
        var stream = new KnownModelStream(11);
        var events = Enumerable.Range(0, n).Select(i => stream.Next(i)).ToList();
        var engine = new ScoringEngine(Options(Enum.Parse<LearnerKind>(learner)), new RecordingSink());
        EngineDriver.Feed(engine, events.Select(e => e.Json));

        var fit = LogisticNewtonFit.Fit(events.Select(e => e.Dense).ToList(), events.Select(e => (double)e.Label).ToList());
        Assert.True(fit.Converged, fit.Problem);
        double batchLogLoss = -fit.LogLikelihood / n;

        var online = engine.Totals.Current;
        Assert.InRange(online.LogLoss / batchLogLoss, 0.98, 1.02);
        Assert.True(online.Ece < 0.015, $"ECE {online.Ece}");
        Assert.True(engine.Window.Current.Ece < 0.04, $"window ECE {engine.Window.Current.Ece}");
    }

    [Fact]
    public void Forgetting_AfterABreak_RestoresCalibrationFasterThanNoForgetting()
    {
        double GapAfterBreak(double halfLife)
        {
            var stream = new KnownModelStream(5);
            var engine = new ScoringEngine(Options(LearnerKind.Ftrl, halfLife), new RecordingSink());
            var lines = new List<string>();
            for (int i = 0; i < 60_000; i++)
            {
                stream.Shift = i < 40_000 ? 0 : 1.0;
                lines.Add(stream.Next(i).Json);
            }
            EngineDriver.Feed(engine, lines);
            return Math.Abs(engine.Window.Current.CalibrationInTheLarge);
        }

        double withForgetting = GapAfterBreak(2_000);
        double without = GapAfterBreak(0);
        Assert.True(withForgetting < 0.02, $"gap with forgetting {withForgetting}");
        Assert.True(withForgetting < without, $"with {withForgetting} vs without {without}");
    }

    [Fact]
    public void Update_NonFiniteGradient_NeverReachesTheWeights()
    {
        var options = new ModelOptions { HashBits = 10, Scaling = ScalingMode.None };
        var learner = OnlineLearner.Create(options);
        var x = new SparseVector();
        x.Add(3, 1.0);
        x.Add(7, 1e200);
        Assert.False(learner.Update(x, 1));
        Assert.Equal(0, learner.Weight(3));
        Assert.Equal(0, learner.Weight(7));
        Assert.Equal(1, learner.RefusedUpdates);
        Assert.Equal(0, learner.Updates);
    }

    [Fact]
    public void Update_ManyHalfLivesFtrl_RenormalisesWithoutChangingTheModel()
    {
        // With a half-life of 10 labels the stored statistics are renormalised every ~5,000
        // labels. After 200 half-lives the state no longer depends on older history (2^-200),
        // so a learner that has run 20,000 labels (three renormalisations) must agree with
        // one that saw only the last 2,000 (none).
        var options = new ModelOptions { HashBits = 10, HalfLifeLabels = 10, Learner = LearnerKind.Ftrl };
        var full = OnlineLearner.Create(options);
        var recent = OnlineLearner.Create(options);
        var x = new SparseVector();
        x.Add(1, 1.0);
        x.Add(2, -0.5);
        for (int i = 0; i < 20_000; i++)
        {
            int y = i % 4 == 0 ? 1 : 0;
            full.Update(x, y);
            if (i >= 18_000)
            {
                recent.Update(x, y);
            }
        }
        Assert.True(double.IsFinite(full.Weight(1)));
        Assert.Equal(recent.Weight(1), full.Weight(1), 1e-9);
        Assert.Equal(recent.Weight(2), full.Weight(2), 1e-9);
    }

    [Fact]
    public void Update_ManyHalfLivesAdaGrad_KeepsLearningThroughRenormalisation()
    {
        // AdaGrad forgets only its squared-gradient sums, so its weights keep their history;
        // through three renormalisations the margin must still settle at the log-odds of the
        // positive rate 1/4, ln(1/3) = -1.0986, within the noise of a 10-label memory.
        var l = OnlineLearner.Create(new ModelOptions { HashBits = 10, HalfLifeLabels = 10, Learner = LearnerKind.AdaGrad });
        var x = new SparseVector();
        x.Add(1, 1.0);
        x.Add(2, -0.5);
        double mean = 0;
        for (int i = 0; i < 20_000; i++)
        {
            l.Update(x, i % 4 == 0 ? 1 : 0);
            if (i >= 16_000)
            {
                mean += l.Margin(x) / 4_000;
            }
        }
        Assert.InRange(mean, -1.3, -0.9);
    }

    [Theory]
    [InlineData(nameof(LearnerKind.Ftrl))]
    [InlineData(nameof(LearnerKind.AdaGrad))]
    public void Export_SlotsWrittenInScrambledOrder_AreAscendingWithTheirOwnWeights(string learner)
    {
        // A snapshot lists the written slots in ascending order, each with its own statistics
        // (the saved model's layout). Slots are first written in a scrambled order spread over
        // the whole hash space, so the order of the learner's table is not the slot order.
        var options = new ModelOptions { Learner = Enum.Parse<LearnerKind>(learner), HashBits = 16 };
        var model = OnlineLearner.Create(options);
        var random = new Random(7);
        var x = new SparseVector();
        var written = new HashSet<int>();
        for (int i = 0; i < 3_000; i++)
        {
            x.Clear();
            for (int f = 0; f < 5; f++)
            {
                int slot = random.Next(model.Size);
                x.Add(slot, 1.0);
                written.Add(slot);
            }
            model.Update(x, random.Next(2));
        }

        var state = model.Export();

        // Common practice: the reference order is a plain sort of the slots written.
        var expected = written.Where(s => model.Weight(s) != 0).Order().ToArray();
        Assert.Equal(expected, state.Slots.Intersect(expected).ToArray());
        Assert.True(state.Slots.Zip(state.Slots.Skip(1)).All(p => p.First < p.Second), "slots ascending, each once");
        var restored = OnlineLearner.Create(options);
        restored.Import(state);
        Assert.All(written, s => Assert.Equal(model.Weight(s), restored.Weight(s)));
    }
}
