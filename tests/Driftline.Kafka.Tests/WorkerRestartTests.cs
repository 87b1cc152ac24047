using Driftline.Kafka.Tests.Support;
using Driftline.Core.Options;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerRestartTests
{
    [Fact]
    public void Run_StoppedMidStreamAndRestarted_ModelsEqualAnUninterruptedRun()
    {
        using var cluster = new MockCluster();
        // The stream arrives in two parts split at a timestamp, and the worker is stopped
        // between them: a deterministic mid-stream restart, whatever the machine's speed.
        var stream = new StreamHalves(6_000, keys: 8, seed: 5);
        int events = stream.Events;
        int late = stream.All.Count(r => r.IsLabel);
        int firstEvents = stream.FirstEvents;
        int firstJoined = stream.FirstJoined;
        Topics.ProduceStream(cluster.Bootstrap, "rs-events", "rs-labels", stream.First);

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
        Topics.ProduceStream(cluster.Bootstrap, "rs-events", "rs-labels", stream.Second);
        using (var second = new WorkerHost(resumed))
        {
            second.WaitFor(s => s.Partitions > 0 && CheckpointFiles.Done(resumedDir.Path, resumed.EventsTopic, events, second.Worker.Stats), TimeSpan.FromSeconds(60));
            second.Stop();
        }

        using var straightDir = new TempDir();
        var expected = stream.Uninterrupted(cluster, "rs", straightDir.Path);
        var actual = CheckpointFiles.All(resumedDir.Path, resumed.EventsTopic);
        CheckpointFiles.AssertSame(expected, actual);
        Assert.Equal(events, actual.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(late, actual.Sum(c => c.Snapshot.Counters.LateLabels));
        Assert.Equal(0, actual.Sum(c => c.Snapshot.Counters.DuplicateLabels + c.Snapshot.Counters.UnknownLabels));

        // A clean stop checkpoints exactly where it stopped: every event scored exactly once.
        var ids = Topics.ReadAll(cluster.Bootstrap, resumed.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30)).Select(CheckpointFiles.Id).ToList();
        Assert.Equal(events, ids.Count);
        Assert.Equal(events, ids.Distinct().Count());
    }

    [Fact]
    public void Run_MulticlassStoppedMidStreamAndRestarted_ModelsEqualAnUninterruptedRun()
    {
        // The same restart with Model:Classes and the live recalibration on: the softmax
        // weights, the per-class windows and rules, the pending class probabilities and the
        // vector-scaling fit all come back from the checkpoint.
        using var cluster = new MockCluster();
        var core = new Driftline.Core.Options.DriftlineOptions
        {
            Model = new Driftline.Core.Options.ModelOptions { Classes = ["on-time", "late", "failed"] },
            Recalibration = { Mode = Driftline.Core.Recalibration.RecalibrationMode.Always, MinLabels = 20 },
        };
        var stream = new StreamHalves(4_000, keys: 4, seed: 9, core);
        int events = stream.Events;
        Topics.ProduceStream(cluster.Bootstrap, "mc-events", "mc-labels", stream.First);

        using var resumedDir = new TempDir();
        var resumed = WorkerHost.OptionsFor(cluster.Bootstrap, "mc", resumedDir.Path, group: "resumed");
        resumed.PredictionsTopic = "mc-predictions-resumed";
        using (var first = new WorkerHost(resumed, core))
        {
            first.WaitFor(s => s.Predictions >= stream.FirstEvents && s.LabelsJoined >= stream.FirstJoined, TimeSpan.FromSeconds(60));
            first.Stop();
        }
        Topics.ProduceStream(cluster.Bootstrap, "mc-events", "mc-labels", stream.Second);
        using (var second = new WorkerHost(resumed, core))
        {
            second.WaitFor(s => s.Partitions > 0 && CheckpointFiles.Done(resumedDir.Path, resumed.EventsTopic, events, second.Worker.Stats), TimeSpan.FromSeconds(60));
            second.Stop();
        }

        using var straightDir = new TempDir();
        var expected = stream.Uninterrupted(cluster, "mc", straightDir.Path);
        var actual = CheckpointFiles.All(resumedDir.Path, resumed.EventsTopic);
        CheckpointFiles.AssertSame(expected, actual);
        Assert.Equal(events, actual.Sum(c => c.Snapshot.Counters.Labels));
        Assert.All(actual, c => Assert.Equal(3, c.Snapshot.Classes!.Count));
        Assert.All(actual, c => Assert.All(c.Snapshot.Models, m => Assert.NotNull(m.Recalibration)));
        var predictions = Topics.ReadAll(cluster.Bootstrap, resumed.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30));
        Assert.All(predictions, line => Assert.Contains("\"p\":{\"on-time\":", line, StringComparison.Ordinal));
        Assert.All(predictions, line => Assert.Contains("\"p_raw\":{\"on-time\":", line, StringComparison.Ordinal));
        // Once a key's fit has MinLabels labels the served probabilities differ from the raw ones somewhere.
        Assert.Contains(predictions, line =>
        {
            using var doc = System.Text.Json.JsonDocument.Parse(line);
            return doc.RootElement.GetProperty("p").GetProperty("late").GetDouble() != doc.RootElement.GetProperty("p_raw").GetProperty("late").GetDouble();
        });
    }

    [Fact]
    public void Run_ChallengersStoppedMidStreamAndRestarted_ChallengersAndEvidenceEqualAnUninterruptedRun()
    {
        // Two challengers in the shadow: one forgets faster, one holds fewer waiting
        // predictions (so it grades fewer labels and the judge pairs by id). Their engines and
        // evidence come back from the checkpoint and continue exactly.
        using var cluster = new MockCluster();
        ChallengerConfig[] challengers =
        [
            new("fast", new DriftlineOptions { Model = { HalfLifeLabels = 300 } }),
            new("small", new DriftlineOptions { Labels = { MaxPending = 20 } }),
        ];
        var stream = new StreamHalves(5_000, keys: 8, seed: 7, challengers: challengers);
        int events = stream.Events;
        Topics.ProduceStream(cluster.Bootstrap, "ch-events", "ch-labels", stream.First);

        using var resumedDir = new TempDir();
        var resumed = WorkerHost.OptionsFor(cluster.Bootstrap, "ch", resumedDir.Path, group: "resumed");
        resumed.PredictionsTopic = "ch-predictions-resumed";
        resumed.ChallengerTopic = "ch-challengers-resumed";
        using (var first = new WorkerHost(resumed, challengers: challengers))
        {
            first.WaitFor(s => s.Predictions >= stream.FirstEvents && s.LabelsJoined >= stream.FirstJoined, TimeSpan.FromSeconds(60));
            first.Stop();
        }
        var middle = CheckpointFiles.All(resumedDir.Path, resumed.EventsTopic);
        Assert.All(middle, c => Assert.Equal(["fast", "small"], c.Challengers!.Select(x => x.Name)));
        Topics.ProduceStream(cluster.Bootstrap, "ch-events", "ch-labels", stream.Second);
        using (var second = new WorkerHost(resumed, challengers: challengers))
        {
            second.WaitFor(s => s.Partitions > 0 && CheckpointFiles.Done(resumedDir.Path, resumed.EventsTopic, events, second.Worker.Stats), TimeSpan.FromSeconds(60));
            // The figures /metrics shows, per challenger and partition.
            Assert.Equal(2 * MockCluster.Partitions, second.Worker.Stats.Challengers.Count);
            second.Stop();
        }

        using var straightDir = new TempDir();
        var expected = stream.Uninterrupted(cluster, "ch", straightDir.Path);
        var actual = CheckpointFiles.All(resumedDir.Path, resumed.EventsTopic);
        CheckpointFiles.AssertSame(expected, actual);
        for (int p = 0; p < actual.Count; p++)
        {
            for (int c = 0; c < challengers.Length; c++)
            {
                var want = expected[p].Challengers![c];
                var got = actual[p].Challengers![c];
                Assert.Equal(want.Name, got.Name);
                Assert.Equal(SnapshotJson(want.Snapshot), SnapshotJson(got.Snapshot));
                Assert.Equal(System.Text.Json.JsonSerializer.Serialize(want.Judge), System.Text.Json.JsonSerializer.Serialize(got.Judge));
            }
        }
        var fast = actual.Select(c => c.Challengers![0].Judge!).ToList();
        var small = actual.Select(c => c.Challengers![1].Judge!).ToList();
        // Every label is graded by the champion and the fast challenger; the small one misses the latest.
        Assert.Equal(events, fast.Sum(j => j.Paired));
        Assert.InRange(small.Sum(j => j.Paired), 1, events - 1);

        // Challenger probabilities go to their own topic, named in a header, never to the predictions topic.
        var published = Topics.ReadAll(cluster.Bootstrap, resumed.ChallengerTopic, v => v.Count >= 2 * events, TimeSpan.FromSeconds(30));
        Assert.Equal(2 * events, published.Select(CheckpointFiles.Id).Count());
        var predictions = Topics.ReadAll(cluster.Bootstrap, resumed.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30));
        Assert.Equal(events, predictions.Count);
    }

    private static string SnapshotJson(Driftline.Core.Snapshots.EngineSnapshot snapshot)
    {
        using var stream = new MemoryStream();
        Driftline.Core.Snapshots.SnapshotCodec.Write(snapshot, stream);
        return System.Text.Encoding.UTF8.GetString(stream.ToArray());
    }
}
