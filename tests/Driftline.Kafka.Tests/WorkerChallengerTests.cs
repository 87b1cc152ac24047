using Driftline.Core.Challengers;
using Driftline.Core.Options;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>Challengers on the live worker (issue 11): their verdict goes where the champion's alerts go.</summary>
public sealed class WorkerChallengerTests
{
    [Fact]
    public void Run_ChallengerThatLearnsAgainstAChampionThatBarelyDoes_ChallengerBetterOnTheAlertsTopicAndCounted()
    {
        // A champion whose steps are a millionth of the default's stays near its start; a
        // challenger with the defaults learns the stream's relationship, so its log-loss is
        // lower on the same labels and the test must say so.
        using var cluster = new MockCluster();
        var records = TestStream.Generate(6_000, keys: 2, seed: 3);
        int events = records.Count(r => !r.IsLabel);
        Topics.ProduceStream(cluster.Bootstrap, "cb-events", "cb-labels", records);
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "cb", dir.Path);
        var champion = new DriftlineOptions { Model = { LearningRate = 1e-6 } };

        using (var host = new WorkerHost(options, champion, challengers: [new ChallengerConfig("learns", new DriftlineOptions())]))
        {
            host.WaitFor(s => s.Predictions >= events && s.LabelsJoined >= events, TimeSpan.FromSeconds(60));
            host.Stop();
            Assert.True(host.Worker.Stats.ChallengerDecisions > 0, "the challenger was never declared better");
            var figures = host.Worker.Stats.Challengers;
            Assert.Empty(figures); // given up at the stop with the partitions
        }

        var alerts = Topics.ReadAll(cluster.Bootstrap, options.AlertsTopic!, v => v.Any(a => a.Contains(ChallengerJudge.RuleName, StringComparison.Ordinal)), TimeSpan.FromSeconds(30));
        var verdict = System.Text.Json.JsonDocument.Parse(alerts.First(a => a.Contains(ChallengerJudge.RuleName, StringComparison.Ordinal))).RootElement;
        Assert.Equal(ChallengerJudge.RuleName, verdict.GetProperty("rule").GetString());
        Assert.Contains("'learns'", verdict.GetRawText(), StringComparison.Ordinal);
        // Only the champion's probabilities are published without a challenger topic.
        Assert.Equal(events, Topics.ReadAll(cluster.Bootstrap, options.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30)).Count);
    }

    [Fact]
    public void Run_AutoPromoteThenStoppedAndRestarted_PromotedChampionKeptAndEqualsAnUninterruptedRun()
    {
        // The champion barely learns and promotes: after the first half the checkpoints record
        // the promotion and hold the challenger's engine as the champion's; the restarted worker
        // keeps it (the challenger is not started again) and ends where a run without a stop ends.
        using var cluster = new MockCluster();
        var champion = new DriftlineOptions { Model = { LearningRate = 1e-6 }, Challengers = { AutoPromote = true } };
        ChallengerConfig[] challengers = [new("learns", new DriftlineOptions())];
        var stream = new StreamHalves(12_000, keys: 4, seed: 11, champion, challengers);
        int events = stream.Events;
        Topics.ProduceStream(cluster.Bootstrap, "ap-events", "ap-labels", stream.First);

        using var resumedDir = new TempDir();
        var resumed = WorkerHost.OptionsFor(cluster.Bootstrap, "ap", resumedDir.Path, group: "resumed");
        resumed.PredictionsTopic = "ap-predictions-resumed";
        using (var first = new WorkerHost(resumed, champion, challengers: challengers))
        {
            first.WaitFor(s => s.Predictions >= stream.FirstEvents && s.LabelsJoined >= stream.FirstJoined, TimeSpan.FromSeconds(60));
            first.Stop();
        }
        var middle = CheckpointFiles.All(resumedDir.Path, resumed.EventsTopic);
        var promoted = middle.Where(c => c.Promotions is { Count: > 0 }).ToList();
        Assert.NotEmpty(promoted);
        Assert.All(promoted, c =>
        {
            Assert.Equal("learns", Assert.Single(c.Promotions!).Challenger);
            Assert.Equal(0.1, c.Snapshot.Options.Model.LearningRate);
            Assert.Empty(c.Challengers!);
        });
        Topics.ProduceStream(cluster.Bootstrap, "ap-events", "ap-labels", stream.Second);
        using (var second = new WorkerHost(resumed, champion, challengers: challengers))
        {
            second.WaitFor(s => s.Partitions > 0 && CheckpointFiles.Done(resumedDir.Path, resumed.EventsTopic, events, second.Worker.Stats), TimeSpan.FromSeconds(60));
            second.Stop();
        }

        using var straightDir = new TempDir();
        var expected = stream.Uninterrupted(cluster, "ap", straightDir.Path);
        var actual = CheckpointFiles.All(resumedDir.Path, resumed.EventsTopic);
        CheckpointFiles.AssertSame(expected, actual);
        for (int p = 0; p < actual.Count; p++)
        {
            Assert.Equal(System.Text.Json.JsonSerializer.Serialize(expected[p].Promotions), System.Text.Json.JsonSerializer.Serialize(actual[p].Promotions));
        }
        Assert.All(promoted, c => Assert.Equal(c.Promotions, actual.Single(a => a.Partition == c.Partition).Promotions));
        var alerts = Topics.ReadAll(cluster.Bootstrap, resumed.AlertsTopic!, v => v.Count(a => a.Contains(ChallengerPanel.PromotedRule, StringComparison.Ordinal)) >= promoted.Count, TimeSpan.FromSeconds(30));
        Assert.Contains(alerts, a => a.Contains(ChallengerPanel.PromotedRule, StringComparison.Ordinal));
    }
}
