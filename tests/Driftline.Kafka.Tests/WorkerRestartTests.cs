using System.Text;
using Driftline.Core.Snapshots;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerRestartTests
{
    [Fact]
    public void Run_StoppedMidStreamAndRestarted_ModelsEqualAnUninterruptedRun()
    {
        using var cluster = new MockCluster();
        var records = TestStream.Generate(6_000, keys: 8, seed: 5).OrderBy(r => r.TimestampMs).ToList();
        int events = records.Count(r => !r.IsLabel);
        int late = records.Count(r => r.IsLabel);
        // The stream arrives in two parts split at a timestamp, and the worker is stopped
        // between them: a deterministic mid-stream restart, whatever the machine's speed.
        long cut = records[records.Count / 2].TimestampMs;
        var firstPart = records.Where(r => r.TimestampMs < cut).ToList();
        var secondPart = records.Where(r => r.TimestampMs >= cut).ToList();
        int firstEvents = firstPart.Count(r => !r.IsLabel);
        int firstJoined = firstPart.Count(r => r.IsLabel) + firstPart.Count(r => !r.IsLabel && r.Value.Contains("\"label\"", StringComparison.Ordinal));
        Topics.ProduceStream(cluster.Bootstrap, "rs-events", "rs-labels", firstPart);

        using var resumedDir = new TempDir();
        var resumed = WorkerHost.OptionsFor(cluster.Bootstrap, "rs", resumedDir.Path, group: "resumed");
        resumed.PredictionsTopic = "rs-predictions-resumed";
        using (var first = new WorkerHost(resumed))
        {
            first.WaitFor(s => s.Predictions >= firstEvents && s.LabelsJoined >= firstJoined, TimeSpan.FromSeconds(60));
            first.Stop();
            Assert.Equal(firstEvents, first.Worker.Stats.Predictions);
        }
        Assert.NotEmpty(CheckpointFiles.All(resumedDir.Path, resumed.EventsTopic));
        Topics.ProduceStream(cluster.Bootstrap, "rs-events", "rs-labels", secondPart);
        using (var second = new WorkerHost(resumed))
        {
            second.WaitFor(s => s.Partitions > 0 && CheckpointFiles.Done(resumedDir.Path, resumed.EventsTopic, events, second.Worker.Stats), TimeSpan.FromSeconds(60));
            second.Stop();
        }

        using var straightDir = new TempDir();
        var straight = WorkerHost.OptionsFor(cluster.Bootstrap, "rs", straightDir.Path, group: "straight");
        straight.PredictionsTopic = "rs-predictions-straight";
        using (var host = new WorkerHost(straight))
        {
            host.WaitFor(s => s.Predictions >= events && s.LabelsJoined >= events, TimeSpan.FromSeconds(60));
            host.Stop();
        }

        var expected = CheckpointFiles.All(straightDir.Path, straight.EventsTopic);
        var actual = CheckpointFiles.All(resumedDir.Path, resumed.EventsTopic);
        Assert.Equal(MockCluster.Partitions, actual.Count);
        for (int p = 0; p < expected.Count; p++)
        {
            Assert.Equal(expected[p].EventsOffset, actual[p].EventsOffset);
            Assert.Equal(expected[p].LabelsOffset, actual[p].LabelsOffset);
            Assert.Equal(Json(expected[p]), Json(actual[p]));
        }
        Assert.Equal(events, actual.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(late, actual.Sum(c => c.Snapshot.Counters.LateLabels));
        Assert.Equal(0, actual.Sum(c => c.Snapshot.Counters.DuplicateLabels + c.Snapshot.Counters.UnknownLabels));

        // A clean stop checkpoints exactly where it stopped: every event scored exactly once.
        var ids = Topics.ReadAll(cluster.Bootstrap, resumed.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30)).Select(CheckpointFiles.Id).ToList();
        Assert.Equal(events, ids.Count);
        Assert.Equal(events, ids.Distinct().Count());
    }

    private static string Json(PartitionCheckpoint checkpoint)
    {
        using var stream = new MemoryStream();
        SnapshotCodec.Write(checkpoint.Snapshot, stream);
        return Encoding.UTF8.GetString(stream.ToArray());
    }
}
