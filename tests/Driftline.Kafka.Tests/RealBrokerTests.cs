using Confluent.Kafka;
using Confluent.Kafka.Admin;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>
/// The end-to-end run against a real KRaft broker in a container. Skipped, with the reason,
/// where no Docker engine answers (as on the build machines here); runs wherever one does.
/// </summary>
public sealed class RealBrokerTests
{
    [Fact]
    public async Task Run_RealBroker_OnePredictionPerEventAndEveryLabelJoined()
    {
        var container = RealBroker.BuildOrSkip("real-broker test");
        await using (container)
        {
            var token = TestContext.Current.CancellationToken;
            await container.StartAsync(token);
            string bootstrap = container.GetBootstrapAddress();
            using (var admin = new AdminClientBuilder(new AdminClientConfig { BootstrapServers = bootstrap }).Build())
            {
                // A real broker needs the topics made, co-partitioned, before the worker checks them.
                await admin.CreateTopicsAsync(new[] { "real-events", "real-labels", "real-predictions", "real-alerts", "real-dead" }
                    .Select(t => new TopicSpecification { Name = t, NumPartitions = MockCluster.Partitions, ReplicationFactor = 1 }));
            }
            var records = TestStream.Generate(2_000, keys: 8);
            int events = records.Count(r => !r.IsLabel);
            Topics.ProduceStream(bootstrap, "real-events", "real-labels", records);
            using var dir = new TempDir();
            var options = WorkerHost.OptionsFor(bootstrap, "real", dir.Path);
            using (var host = new WorkerHost(options))
            {
                host.WaitFor(s => s.Predictions >= events && s.LabelsJoined >= events, TimeSpan.FromSeconds(90));
                host.Stop();
            }
            var ids = Topics.ReadAll(bootstrap, options.PredictionsTopic, v => v.Count >= events, TimeSpan.FromSeconds(60)).Select(CheckpointFiles.Id).ToList();
            Assert.Equal(events, ids.Count);
            Assert.Equal(events, ids.Distinct().Count());
        }
    }
}
