using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerGroupTests
{
    [Fact]
    public void Run_TwoWorkersInOneGroup_SplitThePartitionsAndEachKeysModelLivesOnOne()
    {
        using var cluster = new MockCluster();
        // Create the topics first (the mock makes them on first produce) so both workers see every partition.
        Topics.Produce(cluster.Bootstrap, "grp-events", [("k0", "{\"id\":\"warm-up\",\"features\":{}}", TestStream.StartMs - 60_000)]);
        Topics.Produce(cluster.Bootstrap, "grp-labels", [("k0", "{\"id\":\"warm-up\",\"label\":0}", TestStream.StartMs - 59_000)]);
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "grp", dir.Path);
        using var a = new WorkerHost(options);
        using var b = new WorkerHost(options);
        // The group hands partitions over in steps: wait until the split has held for a second.
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(30);
        string split = "";
        var since = DateTime.UtcNow;
        while (true)
        {
            string now = string.Join(",", a.Worker.Owned.Keys.Order()) + "|" + string.Join(",", b.Worker.Owned.Keys.Order());
            bool complete = a.Worker.Owned.Count + b.Worker.Owned.Count == MockCluster.Partitions && !a.Worker.Owned.IsEmpty && !b.Worker.Owned.IsEmpty;
            if (now != split)
            {
                split = now;
                since = DateTime.UtcNow;
            }
            else if (complete && DateTime.UtcNow - since > TimeSpan.FromSeconds(1))
            {
                break;
            }
            Assert.True(DateTime.UtcNow < deadline, $"partitions not split: {split}");
            Thread.Sleep(20);
        }

        var records = TestStream.Generate(3_000, keys: 16, seed: 3);
        int events = records.Count(r => !r.IsLabel) + 1;
        Topics.ProduceStream(cluster.Bootstrap, options.EventsTopic, options.LabelsTopic!, records);
        deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        while (a.Worker.Stats.Predictions + b.Worker.Stats.Predictions < events || a.Worker.Stats.LabelsJoined + b.Worker.Stats.LabelsJoined < events)
        {
            Assert.True(DateTime.UtcNow < deadline, "the workers did not score the whole stream");
            Assert.Null(a.Failure);
            Assert.Null(b.Failure);
            Thread.Sleep(20);
        }
        Assert.Empty(a.Worker.Owned.Keys.Intersect(b.Worker.Owned.Keys));
        var aKeys = a.Worker.ModelKeys.Keys.ToHashSet();
        var bKeys = b.Worker.ModelKeys.Keys.ToHashSet();
        a.Stop();
        b.Stop();

        Assert.Empty(aKeys.Intersect(bKeys));
        Assert.Equal(17, aKeys.Count + bKeys.Count); // k0–k15 plus the default key of the warm-up event
        Assert.True(a.Worker.Stats.Predictions > 0 && b.Worker.Stats.Predictions > 0, "both workers scored");
        var ids = Topics.ReadAll(cluster.Bootstrap, options.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30)).Select(CheckpointFiles.Id).ToList();
        Assert.Equal(events, ids.Count);
        Assert.Equal(events, ids.Distinct().Count());
        Assert.Equal(0, a.Worker.Stats.DeadLetters + b.Worker.Stats.DeadLetters);
    }

    [Fact]
    public void Run_SecondWorkerJoinsMidStream_PartitionsMoveWithTheirStateAndNothingRepeats()
    {
        using var cluster = new MockCluster();
        var records = TestStream.Generate(8_000, keys: 16, seed: 8);
        int events = records.Count(r => !r.IsLabel);
        // Split by time, so labels of the first half's last events come in the second half
        // and have to find their predictions in the state the first worker hands over.
        long middle = records.Where(r => !r.IsLabel).ElementAt(events / 2).TimestampMs;
        var first = records.Where(r => r.TimestampMs < middle).ToList();
        var second = records.Where(r => r.TimestampMs >= middle).ToList();
        Topics.ProduceStream(cluster.Bootstrap, "move-events", "move-labels", first);

        // The shared folder stands for storage both machines see.
        using var shared = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "move", shared.Path, group: "pair");
        using var a = new WorkerHost(options);
        a.WaitFor(s => s.Predictions >= first.Count(r => !r.IsLabel) && s.LabelsIn >= first.Count(r => r.IsLabel), TimeSpan.FromSeconds(60));
        using var b = new WorkerHost(options);
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(30);
        while (b.Worker.Owned.IsEmpty || a.Worker.Owned.Count + b.Worker.Owned.Count != MockCluster.Partitions)
        {
            Assert.True(DateTime.UtcNow < deadline, $"no hand-over: a owns {a.Worker.Owned.Count}, b owns {b.Worker.Owned.Count}");
            Thread.Sleep(20);
        }
        Topics.ProduceStream(cluster.Bootstrap, "move-events", "move-labels", second);
        deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        while (CheckpointFiles.All(shared.Path, options.EventsTopic).Sum(c => c.Snapshot.Counters.Labels) < events)
        {
            if (DateTime.UtcNow >= deadline)
            {
                var dead = Topics.ReadAll(cluster.Bootstrap, options.DeadLetterTopic, v => v.Count >= 3, TimeSpan.FromSeconds(5)).Take(3);
                Assert.Fail(string.Join("\n", dead));
            }
            Assert.True(DateTime.UtcNow < deadline, $"not done: a scored {a.Worker.Stats.Predictions}, b scored {b.Worker.Stats.Predictions}; labels in {a.Worker.Stats.LabelsIn}+{b.Worker.Stats.LabelsIn}, joined {a.Worker.Stats.LabelsJoined}+{b.Worker.Stats.LabelsJoined}, dead {a.Worker.Stats.DeadLetters}+{b.Worker.Stats.DeadLetters}; a owns {string.Join(",", a.Worker.Owned.Keys)}, b owns {string.Join(",", b.Worker.Owned.Keys)}; checkpoints {string.Join(" ", CheckpointFiles.All(shared.Path, options.EventsTopic).Select(c => $"p{c.Partition}:{c.Snapshot.Counters.Events}e/{c.Snapshot.Counters.Labels}l@{c.EventsOffset}/{c.LabelsOffset}"))}; expected {events}");
            Assert.Null(a.Failure);
            Assert.Null(b.Failure);
            Thread.Sleep(20);
        }
        a.Stop();
        b.Stop();
        Assert.True(b.Worker.Stats.LabelsJoined > 0, "the second worker took partitions over and learned");

        // Live input interleaves by arrival, so the models need not equal a replay's bit for
        // bit (the restart tests check that on recorded input); no label is lost or doubled.
        var actual = CheckpointFiles.All(shared.Path, options.EventsTopic);
        Assert.Equal(events, actual.Sum(c => c.Snapshot.Counters.Events));
        Assert.Equal(events, actual.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(records.Count(r => r.IsLabel), actual.Sum(c => c.Snapshot.Counters.LateLabels));
        Assert.Equal(0, actual.Sum(c => c.Snapshot.Counters.UnknownLabels + c.Snapshot.Counters.DuplicateLabels));
        Assert.Equal(0, a.Worker.Stats.DeadLetters + b.Worker.Stats.DeadLetters);
        var ids = Topics.ReadAll(cluster.Bootstrap, options.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30)).Select(CheckpointFiles.Id).ToList();
        Assert.Equal(events, ids.Distinct().Count());
        Assert.Equal(events, ids.Count); // a clean hand-over repeats nothing
    }
}
