using Confluent.Kafka;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Tests.Support;
using Serilog.Events;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerDoubleOwnerTests
{
    [Fact]
    public void Run_AnotherOwnerWroteANewerCheckpoint_TheWorkerKeepsItWarnsAndCommitsNothingMoreForThePartition()
    {
        // The mock cluster assigned a partition to a member while its old owner still held it
        // (Kafka README, missed rounds): both write the shared folder. Here the other owner is
        // played by the test, writing a checkpoint far ahead of the worker's on one partition.
        // The worker's later checkpoints of it must not replace that one (common practice: a
        // checkpoint only moves forward), and committing its own, older offset would move the
        // group's committed offset back behind the other owner's.
        using var log = new LogCapture();
        using var cluster = new MockCluster();
        var stream = TestStream.Generate(4_000, keys: 16);
        var (first, second) = (stream.Where(r => r.TimestampMs < TestStream.StartMs + 20_000).ToList(), stream.Where(r => r.TimestampMs >= TestStream.StartMs + 20_000).ToList());
        Topics.ProduceStream(cluster.Bootstrap, "fence-events", "fence-labels", first);
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "fence", dir.Path);
        using var host = new WorkerHost(options);
        host.WaitFor(s => s.Checkpoints >= MockCluster.Partitions && s.Partitions == MockCluster.Partitions, TimeSpan.FromSeconds(60));
        var store = new CheckpointStore(dir.Path);
        var ours = CheckpointFiles.All(dir.Path, options.EventsTopic).First();
        int partition = ours.Partition;
        var theirs = store.Read(options.EventsTopic, partition)!;
        theirs.EventsOffset += 1_000_000;
        theirs.LabelsOffset += 1_000_000;
        Assert.Null(store.Write(theirs, CheckpointStore.Serialize(theirs)));
        string warning = $"Partition {partition}: another owner wrote a newer checkpoint";

        Topics.ProduceStream(cluster.Bootstrap, options.EventsTopic, options.LabelsTopic!, second.Take(second.Count / 2));
        WaitForLog(log, warning, host);
        long committed = Committed(cluster.Bootstrap, options, partition);
        int warnings = log.Messages(LogEventLevel.Warning).Count(m => m.StartsWith(warning, StringComparison.Ordinal));
        Topics.ProduceStream(cluster.Bootstrap, options.EventsTopic, options.LabelsTopic!, second.Skip(second.Count / 2));
        WaitForLog(log, warning, host, after: warnings);
        host.Stop();

        var kept = store.Read(options.EventsTopic, partition)!;
        Assert.Equal((theirs.EventsOffset, theirs.LabelsOffset), (kept.EventsOffset, kept.LabelsOffset));
        Assert.Equal(committed, Committed(cluster.Bootstrap, options, partition));
        Assert.True(host.Worker.Stats.EventsIn >= stream.Count(r => !r.IsLabel), "every event was read, the fenced partition's too");
        // The other partitions carry on as before: the final checkpoint holds every event and is committed.
        var others = CheckpointFiles.All(dir.Path, options.EventsTopic).Where(c => c.Partition != partition).ToList();
        Assert.Equal(MockCluster.Partitions - 1, others.Count);
        Assert.All(others, c => Assert.Equal(c.EventsOffset, Committed(cluster.Bootstrap, options, c.Partition)));
    }

    private static void WaitForLog(LogCapture log, string start, WorkerHost host, int after = 0)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        while (log.Messages(LogEventLevel.Warning).Count(m => m.StartsWith(start, StringComparison.Ordinal)) <= after)
        {
            Assert.Null(host.Failure);
            Assert.True(DateTime.UtcNow < deadline, $"no new warning '{start}' within 60 s");
            Thread.Sleep(50);
        }
    }

    private static long Committed(string bootstrap, Driftline.Kafka.Options.KafkaOptions options, int partition)
    {
        using var consumer = new ConsumerBuilder<Ignore, Ignore>(new ConsumerConfig { BootstrapServers = bootstrap, GroupId = options.Group, EnableAutoCommit = false })
            .SetLogHandler((_, _) => { }).Build();
        return consumer.Committed([new TopicPartition(options.EventsTopic, partition)], TimeSpan.FromSeconds(10)).Single().Offset.Value;
    }
}
