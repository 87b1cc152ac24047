using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerEndToEndTests
{
    [Fact]
    public void Run_EventsAndLateLabelsOnSeparateTopic_OnePredictionPerEventAndEveryLabelJoined()
    {
        using var cluster = new MockCluster();
        var records = TestStream.Generate(4_000, keys: 8);
        int events = records.Count(r => !r.IsLabel);
        int late = records.Count(r => r.IsLabel);
        Topics.ProduceStream(cluster.Bootstrap, "e2e-events", "e2e-labels", records);
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "e2e", dir.Path);

        using (var host = new WorkerHost(options))
        {
            host.WaitFor(s => s.Predictions >= events && s.LabelsJoined >= events, TimeSpan.FromSeconds(60));
            host.Stop();
            Assert.Equal(0, host.Worker.Stats.DeadLetters);
        }

        var predictions = Topics.ReadAll(cluster.Bootstrap, options.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30));
        // Each message is one prediction object, the file output's line without its newline,
        // with the fields of the data contract (DESIGN.md, predictions).
        Assert.All(predictions, v =>
        {
            Assert.False(v.EndsWith('\n'));
            var fields = System.Text.Json.JsonDocument.Parse(v).RootElement.EnumerateObject().Select(f => f.Name).ToList();
            Assert.Equal(["id", "key", "p", "model_version"], fields.Take(4));
            Assert.True(fields.Count == 4 || (fields.Count == 5 && fields[4] == "time"), string.Join(",", fields));
        });
        var ids = predictions.Select(CheckpointFiles.Id).ToList();
        Assert.Equal(events, ids.Count);
        Assert.Equal(records.Where(r => !r.IsLabel).Select(r => r.Id).Order(), ids.Order());
        var checkpoints = CheckpointFiles.All(dir.Path, options.EventsTopic);
        Assert.Equal(MockCluster.Partitions, checkpoints.Count);
        Assert.Equal(late, checkpoints.Sum(c => c.Snapshot.Counters.LateLabels));
        Assert.Equal(events, checkpoints.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(0, checkpoints.Sum(c => c.Snapshot.Counters.UnknownLabels));
    }

    [Fact]
    public void Run_MergeQueuesSmallerThanAFetch_PausesAndResumesLosingNothing()
    {
        // Backpressure: with queues of 100 records a partition is paused as soon as one side runs
        // ahead of the other, and resumed when the merge catches up; every record still arrives once.
        using var cluster = new MockCluster();
        var records = TestStream.Generate(3_000, keys: 8);
        int events = records.Count(r => !r.IsLabel);
        Topics.ProduceStream(cluster.Bootstrap, "bp-events", "bp-labels", records);
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "bp", dir.Path);
        options.MaxBufferedPerPartition = 100;

        using (var host = new WorkerHost(options))
        {
            host.WaitFor(s => s.Predictions >= events && s.LabelsJoined >= events, TimeSpan.FromSeconds(60));
            host.Stop();
            Assert.True(host.Worker.Stats.Pauses > 0, "no partition was paused");
            Assert.Equal(0, host.Worker.Stats.DeadLetters);
        }

        var predictions = Topics.ReadAll(cluster.Bootstrap, options.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30));
        Assert.Equal(records.Where(r => !r.IsLabel).Select(r => r.Id).Order(), predictions.Select(CheckpointFiles.Id).Order());
    }
}
