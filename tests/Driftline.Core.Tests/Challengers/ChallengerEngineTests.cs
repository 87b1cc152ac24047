using Driftline.Core.Alerts;
using Driftline.Core.Challengers;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Challengers;

/// <summary>
/// Challengers judged on engines, as replay wires them: the same events through a champion and
/// a challenger, their per-label log-losses paired. The streams are generated from a known
/// logistic model (<see cref="KnownModelStream"/>) whose relationship changes at a stated label.
/// </summary>
public sealed class ChallengerEngineTests
{
    [Fact]
    public void ShorterHalfLife_AfterRelationshipChanges_DeclaredBetterWithin6000Labels()
    {
        var (champion, challenger, judge, decisions) = Wire(new DriftlineOptions { Model = { HalfLifeLabels = 200_000 } },
            new DriftlineOptions { Model = { HalfLifeLabels = 1_000 } });
        var stream = new KnownModelStream(31);
        const int change = 20_000;
        for (int n = 0; n < change + 6_000; n++)
        {
            stream.Shift = n < change ? 0 : 1.5;
            var line = stream.Next(n).Json;
            EngineDriver.Feed(champion, [line]);
            EngineDriver.Feed(challenger, [line]);
        }

        var after = decisions.Where(d => d.Rule == ChallengerJudge.RuleName && d.Labels > change).ToList();
        // (A decision before the change can be right too: forgetting faster, AdaGrad keeps larger
        // steps, so the challenger learns the first weights sooner. The test restarts after each.)
        Assert.NotEmpty(after);
        Assert.True(after[0].Labels - change <= 6_000, $"declared {after[0].Labels - change} labels after the change");
        Assert.Equal(ChallengerJudge.RuleName, after[0].Rule);
        Assert.Equal(AlertMetric.ChallengerEvidence, after[0].Metric);
        Assert.Equal(change + 6_000, judge.Paired);
    }

    [Fact]
    public void IdenticalConfigurations_NeverSeparated()
    {
        var (champion, challenger, judge, decisions) = Wire(new DriftlineOptions(), new DriftlineOptions());
        var stream = new KnownModelStream(32);
        for (int n = 0; n < 20_000; n++)
        {
            var line = stream.Next(n).Json;
            EngineDriver.Feed(champion, [line]);
            EngineDriver.Feed(challenger, [line]);
        }

        Assert.DoesNotContain(decisions, d => d.Rule == ChallengerJudge.RuleName);
        Assert.Equal(0, judge.Evidence);
        Assert.Equal(judge.ChampionLogLoss, judge.ChallengerLogLoss);
    }

    [Fact]
    public void LateLabels_PairedInGradingOrder()
    {
        var (champion, challenger, judge, _) = Wire(new DriftlineOptions(), new DriftlineOptions { Model = { LearningRate = 0.3 } });
        EngineDriver.Feed(champion, ["""{"id":"a","features":{"x":1}}""", """{"id":"b","features":{"x":2},"label":1}"""]);
        Assert.Equal(0, judge.Paired);
        EngineDriver.Feed(challenger, ["""{"id":"a","features":{"x":1}}""", """{"id":"b","features":{"x":2},"label":1}"""]);
        Assert.Equal(1, judge.Paired);
        EngineDriver.Feed(champion, ["""{"id":"a","label":0}"""]);
        EngineDriver.Feed(challenger, ["""{"id":"a","label":0}"""]);
        Assert.Equal(2, judge.Paired);
    }

    private static (ScoringEngine Champion, ScoringEngine Challenger, ChallengerJudge Judge, List<AlertTransition> Decisions) Wire(
        DriftlineOptions championOptions, DriftlineOptions challengerOptions)
    {
        var sink = new RecordingSink();
        var champion = new ScoringEngine(championOptions, sink);
        var challenger = new ScoringEngine(challengerOptions, new RecordingSink());
        var judge = new ChallengerJudge("short-memory", championOptions.Challengers, champion.Emit);
        champion.LabelGraded += judge.Champion;
        challenger.LabelGraded = judge.Challenger;
        return (champion, challenger, judge, sink.Alerts);
    }
}
