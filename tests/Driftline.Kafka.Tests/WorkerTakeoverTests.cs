using Confluent.Kafka;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Options;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerTakeoverTests
{
    [Fact]
    public void Run_SecondWorkerWithEmptyFolderAndCheckpointTopic_ResumesFromTheTopicLikeAnUninterruptedRun()
    {
        using var cluster = new MockCluster();
        var stream = new StreamHalves(6_000, keys: 8, seed: 9);
        int events = stream.Events;
        Topics.ProduceStream(cluster.Bootstrap, "to-events", "to-labels", stream.First);
        // The mock makes a topic on its first record; the worker needs it to exist beforehand.
        Topics.Produce(cluster.Bootstrap, "to-checkpoints", [("unrelated", "{}", TestStream.StartMs)]);

        // Machine A: its own folder, checkpoints also on the topic.
        using var folderA = new TempDir();
        var onA = WorkerHost.OptionsFor(cluster.Bootstrap, "to", folderA.Path, group: "moved");
        onA.CheckpointTopic = "to-checkpoints";
        onA.PredictionsTopic = "to-predictions-moved";
        using (var first = new WorkerHost(onA))
        {
            first.WaitFor(s => s.Predictions >= stream.FirstEvents && s.LabelsJoined >= stream.FirstJoined, TimeSpan.FromSeconds(60));
            first.Stop();
        }
        Assert.NotEmpty(CheckpointFiles.All(folderA.Path, onA.EventsTopic));
        Topics.ProduceStream(cluster.Bootstrap, "to-events", "to-labels", stream.Second);

        // Machine B: an empty folder; only the topic knows where A stopped.
        using var folderB = new TempDir();
        var onB = WorkerHost.OptionsFor(cluster.Bootstrap, "to", folderB.Path, group: "moved");
        onB.CheckpointTopic = "to-checkpoints";
        onB.PredictionsTopic = onA.PredictionsTopic;
        using (var second = new WorkerHost(onB))
        {
            second.WaitFor(s => s.Partitions > 0 && CheckpointFiles.Done(folderB.Path, onB.EventsTopic, events, second.Worker.Stats), TimeSpan.FromSeconds(60));
            second.Stop();
        }

        using var straightDir = new TempDir();
        var expected = stream.Uninterrupted(cluster, "to", straightDir.Path);
        var actual = CheckpointFiles.All(folderB.Path, onB.EventsTopic);
        var onTopic = FromTopic(cluster, onB);
        CheckpointFiles.AssertSame(expected, actual);
        // The topic holds B's last checkpoint too, ready for the next takeover.
        CheckpointFiles.AssertSame(actual, onTopic);
        Assert.Equal(events, actual.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(0, actual.Sum(c => c.Snapshot.Counters.DuplicateLabels + c.Snapshot.Counters.UnknownLabels));
        var ids = Topics.ReadAll(cluster.Bootstrap, onA.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(30)).Select(CheckpointFiles.Id).ToList();
        Assert.Equal(events, ids.Count);
        Assert.Equal(events, ids.Distinct().Count());
    }

    [Fact]
    public void Run_CheckpointTopicHoldsAnIncompleteCheckpoint_StopsWithOneMessageAndCommitsNothing()
    {
        using var cluster = new MockCluster();
        Topics.ProduceStream(cluster.Bootstrap, "ti-events", "ti-labels", TestStream.Generate(200, keys: 4));
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "ti", dir.Path);
        options.CheckpointTopic = "ti-checkpoints";
        // Manifests whose chunks never arrived, on the partition the writer maps each to (keys of
        // the layout before per-writer keys, which are still read).
        var manifests = Enumerable.Range(0, MockCluster.Partitions)
            .Select(p => TopicCheckpointCodec.Encode(new PartitionCheckpoint { EventsTopic = options.EventsTopic, Partition = p, EventsOffset = 10 }, new byte[10], 1, 0, writer: "")[^1]);
        using (var producer = new ProducerBuilder<byte[]?, byte[]>(ClientSettings.Producer(options)).Build())
        {
            foreach (var (record, p) in manifests.Select((r, p) => (r, p)))
            {
                producer.Produce(new TopicPartition(options.CheckpointTopic, p), new Message<byte[]?, byte[]> { Key = System.Text.Encoding.UTF8.GetBytes(record.Key), Value = record.Value! });
            }
            Assert.Equal(0, producer.Flush(TimeSpan.FromSeconds(10)));
        }

        using var host = new WorkerHost(options);
        var failure = Assert.IsType<KafkaWorkerException>(host.WaitForFailure(TimeSpan.FromSeconds(30)));
        Assert.Contains("is incomplete: chunk 0 of 1 is missing", failure.Message, StringComparison.Ordinal);
        Assert.Contains("tombstone", failure.Message, StringComparison.Ordinal);
        Assert.Equal(0, host.Worker.Stats.Predictions);
        Assert.Equal(0, host.Worker.Stats.Checkpoints);
    }

    private static List<PartitionCheckpoint> FromTopic(MockCluster cluster, KafkaOptions options)
    {
        using var producer = new ProducerBuilder<byte[]?, byte[]>(ClientSettings.Producer(options)).Build();
        var writer = new TopicCheckpointWriter(producer, options.CheckpointTopic!, MockCluster.Partitions);
        using var empty = new TempDir();
        var loaded = new CheckpointLoader(options, new CheckpointStore(empty.Path), writer).Load([.. Enumerable.Range(0, MockCluster.Partitions)]);
        return [.. Enumerable.Range(0, MockCluster.Partitions).Select(p => loaded[p]).OfType<PartitionCheckpoint>()];
    }
}
