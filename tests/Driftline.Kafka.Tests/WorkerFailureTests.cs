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
}
