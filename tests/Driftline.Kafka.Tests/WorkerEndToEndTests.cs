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
        var ids = predictions.Select(CheckpointFiles.Id).ToList();
        Assert.Equal(events, ids.Count);
        Assert.Equal(records.Where(r => !r.IsLabel).Select(r => r.Id).Order(), ids.Order());
        var checkpoints = CheckpointFiles.All(dir.Path, options.EventsTopic);
        Assert.Equal(MockCluster.Partitions, checkpoints.Count);
        Assert.Equal(late, checkpoints.Sum(c => c.Snapshot.Counters.LateLabels));
        Assert.Equal(events, checkpoints.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(0, checkpoints.Sum(c => c.Snapshot.Counters.UnknownLabels));
    }
}
