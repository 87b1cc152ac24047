using Driftline.Core.Alerts;
using Driftline.Core.Challengers;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Challengers;

/// <summary>
/// Challengers judged on engines, as replay wires them: the same events through a champion and
/// a challenger, their per-label log-losses paired by event id. The streams are generated from a known
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
    public void LateLabels_PairedWhenBothSidesGradedThem()
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

    [Fact]
    public void SmallerPendingStore_PairsOnlyTheLabelsBothGraded()
    {
        // The challenger holds one waiting prediction, so the label of "a" finds nothing there:
        // only "b" is graded by both, and it alone is paired (not the champion's "a" with the
        // challenger's "b", as pairing in grading order would).
        var (champion, challenger, judge, _) = Wire(new DriftlineOptions(), new DriftlineOptions { Labels = { MaxPending = 1 } });
        var championLosses = new Dictionary<string, double>();
        var challengerLosses = new Dictionary<string, double>();
        champion.LabelGraded += l => championLosses[l.Id] = l.LogLoss;
        challenger.LabelGraded += l => challengerLosses[l.Id] = l.LogLoss;
        string[] lines =
        [
            """{"id":"w","features":{"x":1},"label":1}""",
            """{"id":"a","features":{"x":1}}""",
            """{"id":"b","features":{"x":-1}}""",
            """{"id":"a","label":0}""",
            """{"id":"b","label":1}""",
        ];
        foreach (var line in lines)
        {
            EngineDriver.Feed(champion, [line]);
            EngineDriver.Feed(challenger, [line]);
        }

        Assert.Equal(["w", "a", "b"], championLosses.Keys);
        Assert.Equal(["w", "b"], challengerLosses.Keys);
        Assert.Equal(2, judge.Paired);
        Assert.Equal(1, judge.Unpaired);
        Assert.Equal((championLosses["w"] + championLosses["b"]) / 2, judge.ChampionLogLoss, 12);
        Assert.Equal((challengerLosses["w"] + challengerLosses["b"]) / 2, judge.ChallengerLogLoss, 12);
    }

    [Fact]
    public void ExportImport_ContinuesExactly()
    {
        // Halfway, the judge's state goes through its export into a fresh judge: both then see
        // the same second half and must agree to the last bit.
        var options = new DriftlineOptions();
        var (champion, challenger, judge, _) = Wire(options, new DriftlineOptions { Model = { HalfLifeLabels = 500 }, Labels = { MaxPending = 10 } });
        var copy = new ChallengerJudge("short-memory", options.Challengers, _ => { });
        var stream = new KnownModelStream(33);
        // Labels come 50 events late, about 18 waiting at once, so the challenger (10 waiting) misses many: the state
        // holds labels waiting for their pair as well as the evidence.
        var lines = new List<string>();
        var labels = new Queue<string>();
        for (int n = 0; n < 4_000; n++)
        {
            var e = stream.Next(n, withLabel: n % 3 != 0);
            lines.Add(e.Json);
            if (n % 3 == 0)
            {
                labels.Enqueue($$"""{"id":"e{{n}}","label":{{e.Label}}}""");
            }
            if (n % 3 == 0 && labels.Count > 17)
            {
                lines.Add(labels.Dequeue());
            }
        }
        foreach (var line in lines.Take(2_000))
        {
            EngineDriver.Feed(champion, [line]);
            EngineDriver.Feed(challenger, [line]);
        }
        copy.Import(judge.Export());
        champion.LabelGraded += copy.Champion;
        challenger.LabelGraded += copy.Challenger;
        foreach (var line in lines.Skip(2_000))
        {
            EngineDriver.Feed(champion, [line]);
            EngineDriver.Feed(challenger, [line]);
        }

        Assert.True(judge.Unpaired > 0, "no label was graded by the champion alone");
        Assert.Equal(System.Text.Json.JsonSerializer.Serialize(judge.Export()), System.Text.Json.JsonSerializer.Serialize(copy.Export()));
        Assert.Equal(judge.Evidence, copy.Evidence);
        Assert.Equal(judge.Paired, copy.Paired);
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
