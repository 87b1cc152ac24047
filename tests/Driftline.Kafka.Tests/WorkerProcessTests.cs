using System.Text;
using System.Text.Json;
using Driftline.Core.Snapshots;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

[Collection(RealProcesses.Name)]
public sealed class WorkerProcessTests
{
    [Fact]
    public void Run_ProcessKilledMidStreamThenRestarted_LosesNothingAndModelsEqualAnUninterruptedRun()
    {
        using var cluster = new MockCluster();
        var records = TestStream.Generate(20_000, keys: 8, seed: 21);
        int events = records.Count(r => !r.IsLabel);
        int late = records.Count(r => r.IsLabel);
        Topics.ProduceStream(cluster.Bootstrap, "kill-events", "kill-labels", records);

        using var dir = new TempDir();
        string config = Path.Combine(dir.Path, "driftline.json");
        string checkpoints = Path.Combine(dir.Path, "checkpoints");
        File.WriteAllText(config, JsonSerializer.Serialize(new
        {
            Kafka = new
            {
                Group = "kill-g",
                EventsTopic = "kill-events",
                LabelsTopic = "kill-labels",
                PredictionsTopic = "kill-predictions",
                AlertsTopic = "kill-alerts",
                DeadLetterTopic = "kill-dead",
                CheckpointDir = checkpoints,
                // Frequent checkpoints slow the first run enough to kill it halfway.
                CheckpointEveryLabels = 50,
                CheckpointEvery = "00:00:01",
                // A killed member holds its partitions until its session times out; the consumer
                // protocol's timeout is the broker's (45 s), the classic one's is the client's.
                Client = new Dictionary<string, string> { ["session.timeout.ms"] = "3000", ["heartbeat.interval.ms"] = "300" },
            },
            Worker = new { MetricsPort = 0 },
        }));

        long labelsAtKill;
        using (var first = new WorkerProcess(config, cluster.Bootstrap))
        {
            WaitForCheckpointedLabels(checkpoints, "kill-events", l => l > events / 10, first);
            first.Kill();
            labelsAtKill = CheckpointFiles.All(checkpoints, "kill-events").Sum(c => c.Snapshot.Counters.Labels);
        }
        TestContext.Current.SendDiagnosticMessage($"killed with {labelsAtKill} of {events} labels checkpointed");
        Assert.True(labelsAtKill < events, $"the first run was killed mid-stream ({labelsAtKill} of {events} labels checkpointed)");

        // The restarted worker checkpoints at the usual pace (an environment override, as an operator would).
        var usualPace = new Dictionary<string, string> { ["DRIFTLINE_Kafka__CheckpointEveryLabels"] = "5000" };
        var clock = System.Diagnostics.Stopwatch.StartNew();
        using (var second = new WorkerProcess(config, cluster.Bootstrap, usualPace))
        {
            // Wait for the restarted worker's own assignment too, so SIGTERM finds it running.
            WaitForCheckpointedLabels(checkpoints, "kill-events", l => l >= events && second.Errors.Contains("assigned", StringComparison.Ordinal), second);
            int exit = second.Terminate(TimeSpan.FromSeconds(30));
            Assert.True(exit == 0, $"exit code {exit} after SIGTERM:\n{second.Errors}");
        }
        TestContext.Current.SendDiagnosticMessage($"restart to done: {clock.Elapsed.TotalSeconds:0.0} s");

        var actual = CheckpointFiles.All(checkpoints, "kill-events");
        Assert.Equal(events, actual.Sum(c => c.Snapshot.Counters.Events));
        Assert.Equal(events, actual.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(late, actual.Sum(c => c.Snapshot.Counters.LateLabels));
        Assert.Equal(0, actual.Sum(c => c.Snapshot.Counters.DuplicateLabels + c.Snapshot.Counters.UnknownLabels));

        // The same stream through one uninterrupted worker ends in the same models, windows and counts.
        using var straightDir = new TempDir();
        var straight = WorkerHost.OptionsFor(cluster.Bootstrap, "kill", straightDir.Path, group: "straight");
        straight.PredictionsTopic = "kill-predictions-straight";
        using (var host = new WorkerHost(straight))
        {
            host.WaitFor(s => s.Predictions >= events && s.LabelsJoined >= events, TimeSpan.FromSeconds(60));
            host.Stop();
        }
        var expected = CheckpointFiles.All(straightDir.Path, "kill-events");
        for (int p = 0; p < expected.Count; p++)
        {
            Assert.Equal(Json(expected[p]), Json(actual[p]));
        }

        // At least once: every event has a prediction; only those after the last checkpoint before the kill repeat.
        var ids = Topics.ReadAll(cluster.Bootstrap, "kill-predictions", v => v.Count >= events && v.Select(CheckpointFiles.Id).Distinct().Count() >= events, TimeSpan.FromSeconds(30))
            .Select(CheckpointFiles.Id).ToList();
        Assert.Equal(events, ids.Distinct().Count());
        Assert.True(ids.Count - events < events, $"{ids.Count - events} duplicate predictions");
    }

    private static long WaitForCheckpointedLabels(string directory, string topic, Func<long, bool> enough, WorkerProcess process)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        while (true)
        {
            Assert.False(process.HasExited, "driftline exited early:\n" + process.Errors);
            Assert.True(DateTime.UtcNow < deadline, "checkpoints did not advance:\n" + process.Errors);
            long labels = 0;
            try
            {
                labels = CheckpointFiles.All(directory, topic).Sum(c => c.Snapshot.Counters.Labels);
            }
            catch (IOException)
            {
                // The folder does not exist yet.
            }
            if (enough(labels))
            {
                return labels;
            }
            Thread.Sleep(5);
        }
    }

    private static string Json(PartitionCheckpoint checkpoint)
    {
        using var stream = new MemoryStream();
        SnapshotCodec.Write(checkpoint.Snapshot, stream);
        return Encoding.UTF8.GetString(stream.ToArray());
    }
}
