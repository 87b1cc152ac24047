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
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(30);
        while (a.Worker.Owned.Count + b.Worker.Owned.Count != MockCluster.Partitions || a.Worker.Owned.IsEmpty || b.Worker.Owned.IsEmpty)
        {
            Assert.True(DateTime.UtcNow < deadline, $"partitions not split: a owns {a.Worker.Owned.Count}, b owns {b.Worker.Owned.Count}");
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
}
