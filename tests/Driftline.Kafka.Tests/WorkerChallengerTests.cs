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
}
