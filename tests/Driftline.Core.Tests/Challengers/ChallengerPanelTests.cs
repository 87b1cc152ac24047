using Driftline.Core.Challengers;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Challengers;

/// <summary>Challengers:AutoPromote: the challenger declared better becomes the champion in place.</summary>
public sealed class ChallengerPanelTests
{
    [Fact]
    public void AutoPromote_ChallengerDeclaredBetter_ServesFromTheNextRecordWithItsModelAndConfiguration()
    {
        // The champion barely learns (a millionth of the default step); the challenger has the defaults.
        var championOptions = new DriftlineOptions { Model = { LearningRate = 1e-6 }, Challengers = { AutoPromote = true } };
        var sink = new RecordingSink();
        ScoringEngine champion = new(championOptions, sink);
        var challengerSink = new RecordingSink();
        var challenger = new ScoringEngine(new DriftlineOptions(), challengerSink);
        var panel = new ChallengerPanel(champion, championOptions.Challengers, snapshot => ScoringEngine.Restore(snapshot, sink));
        var other = panel.Add("also-slow", new ScoringEngine(new DriftlineOptions { Model = { LearningRate = 2e-6 } }, new RecordingSink()));
        panel.Add("usual", challenger);
        var stream = new KnownModelStream(41);
        ChallengerPromotion? promotion = null;
        int promotedAt = -1;
        for (int n = 0; n < 8_000; n++)
        {
            var line = stream.Next(n).Json;
            EngineDriver.Feed(panel.Champion, [line]);
            foreach (var entry in panel.Challengers)
            {
                EngineDriver.Feed(entry.Engine, [line]);
            }
            if (promotion is not null)
            {
                // The promoted challenger is no longer in the panel: fed here as a witness.
                EngineDriver.Feed(challenger, [line]);
            }
            if (panel.Settle() is { } done)
            {
                promotion = done;
                promotedAt = n;
            }
        }

        Assert.NotNull(promotion);
        Assert.Equal("usual", promotion.Challenger);
        Assert.NotSame(champion, panel.Champion);
        Assert.Equal(0.1, panel.Champion.Options.Model.LearningRate);
        Assert.Equal([other], panel.Challengers);
        Assert.Single(panel.Promotions);
        // From the next record on, what is served is what the challenger would have said.
        var served = sink.Predictions.Skip(promotedAt + 1).Select(p => p.P).ToList();
        var witness = challengerSink.Predictions.Skip(promotedAt + 1).Select(p => p.P).ToList();
        Assert.Equal(witness, served);
        Assert.Equal(8_000, sink.Predictions.Count);
        var promoted = Assert.Single(sink.Alerts, a => a.Rule == ChallengerPanel.PromotedRule);
        Assert.Contains("'usual'", promoted.Break, StringComparison.Ordinal);
        Assert.Contains(sink.Alerts, a => a.Rule == ChallengerJudge.RuleName && a.EventId == promotion.EventId);
        // The test of the challenger left behind started afresh against the new champion.
        Assert.True(other.Judge.Paired < 8_000 - promotedAt, $"{other.Judge.Paired} paired");
    }

    [Fact]
    public void AutoPromoteOff_ChallengerDeclaredBetter_ChampionStays()
    {
        var championOptions = new DriftlineOptions { Model = { LearningRate = 1e-6 } };
        var sink = new RecordingSink();
        var champion = new ScoringEngine(championOptions, sink);
        var panel = new ChallengerPanel(champion, championOptions.Challengers, snapshot => ScoringEngine.Restore(snapshot, sink));
        var entry = panel.Add("usual", new ScoringEngine(new DriftlineOptions(), new RecordingSink()));
        var stream = new KnownModelStream(41);
        for (int n = 0; n < 8_000; n++)
        {
            var line = stream.Next(n).Json;
            EngineDriver.Feed(panel.Champion, [line]);
            EngineDriver.Feed(entry.Engine, [line]);
            Assert.Null(panel.Settle());
        }

        Assert.Same(champion, panel.Champion);
        Assert.Contains(sink.Alerts, a => a.Rule == ChallengerJudge.RuleName);
        Assert.DoesNotContain(sink.Alerts, a => a.Rule == ChallengerPanel.PromotedRule);
    }
}
