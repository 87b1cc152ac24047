using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerFailureTests
{
    [Fact]
    public void Run_UnreadableCheckpoint_StopsWithOneMessageNamingTheFileAndCommitsNothing()
    {
        using var cluster = new MockCluster();
        Topics.ProduceStream(cluster.Bootstrap, "bad-events", "bad-labels", TestStream.Generate(200, keys: 4));
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "bad", dir.Path);
        var store = new CheckpointStore(dir.Path);
        for (int p = 0; p < MockCluster.Partitions; p++)
        {
            File.WriteAllText(store.PathOf(options.EventsTopic, p), "{\"format\":\"something else\"");
        }

        using var host = new WorkerHost(options);
        var failure = Assert.IsType<KafkaWorkerException>(host.WaitForFailure(TimeSpan.FromSeconds(30)));
        Assert.Contains(".checkpoint.json", failure.Message, StringComparison.Ordinal);
        Assert.Contains("move it aside", failure.Message, StringComparison.Ordinal);
        Assert.Equal(0, host.Worker.Stats.Predictions);
        Assert.Equal(0, host.Worker.Stats.Checkpoints);
    }

    [Fact]
    public void Run_PredictionsNotAcknowledged_StopsNamingTheDeliveryAndNoCheckpointPassesALostPrediction()
    {
        // The commit rule's first half: a checkpoint (where a restart resumes) and the commit
        // after it may cover an event only once its prediction is on the predictions topic.
        // Every broker answer takes 400 ms and a prediction may wait only 100 ms, so predictions
        // time out before the broker takes them: the worker must stop, naming the failed
        // delivery, and no checkpoint may cover an event whose prediction is not on the topic
        // (with delivery failures ignored, the worker checkpoints past them and this fails).
        using var cluster = new MockCluster(roundTripMs: 400);
        var records = TestStream.Generate(200, keys: 4);
        Topics.ProduceStream(cluster.Bootstrap, "slow-events", "slow-labels", records);
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "slow", dir.Path);
        options.Client["message.timeout.ms"] = "100";

        using (var host = new WorkerHost(options))
        {
            var failure = Assert.IsType<KafkaWorkerException>(host.WaitForFailure(TimeSpan.FromSeconds(60)));
            Assert.Contains("delivery to slow-predictions failed", failure.Message, StringComparison.Ordinal);
        }

        int events = records.Count(r => !r.IsLabel);
        var placed = Topics.ReadPlaced(cluster.Bootstrap, options.EventsTopic, events, TimeSpan.FromSeconds(30));
        Assert.Equal(events, placed.Count);
        var predicted = Topics.ReadAll(cluster.Bootstrap, options.PredictionsTopic, _ => false, TimeSpan.FromSeconds(8)).Select(CheckpointFiles.Id).ToHashSet();
        Assert.True(predicted.Count < events, "every prediction arrived: the test did not make any delivery fail");
        foreach (var checkpoint in CheckpointFiles.All(dir.Path, options.EventsTopic))
        {
            var covered = placed.Where(e => e.Partition == checkpoint.Partition && e.Offset < checkpoint.EventsOffset).Select(e => CheckpointFiles.Id(e.Value));
            Assert.All(covered, id => Assert.Contains(id, predicted));
        }
    }
}
