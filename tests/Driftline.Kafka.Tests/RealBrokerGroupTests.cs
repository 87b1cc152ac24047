using Confluent.Kafka;
using Confluent.Kafka.Admin;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>
/// The consumer-group test of <see cref="WorkerGroupProcessTests"/> against a real KRaft broker
/// in a container: three real <c>driftline run</c> processes share 16 partitions, every id is
/// predicted, every label joined and checkpointed, and each exits 0 on SIGTERM. Skipped, with
/// the reason, where no Docker engine answers (as on the build machines here).
/// </summary>
[Collection(RealProcesses.Name)]
public sealed class RealBrokerGroupTests
{
    private const int Partitions = 16;

    [Fact]
    public async Task Run_ThreeWorkersOnARealBroker_SplitEvenlyAndPredictEveryId()
    {
        var container = RealBroker.BuildOrSkip("real-broker group test");
        await using (container)
        {
            var token = TestContext.Current.CancellationToken;
            await container.StartAsync(token);
            string bootstrap = container.GetBootstrapAddress();
            using var admin = new AdminClientBuilder(new AdminClientConfig { BootstrapServers = bootstrap }).Build();
            void Create(string topic, int partitions) =>
                admin.CreateTopicsAsync([new TopicSpecification { Name = topic, NumPartitions = partitions, ReplicationFactor = 1 }]).GetAwaiter().GetResult();
            // A real broker's smallest session is 6 s (group.min.session.timeout.ms); classic
            // protocol with the cooperative assignor, the worker's default.
            using var group = new WorkerGroup(bootstrap, Create, "rg", Partitions, new Dictionary<string, string> { ["session.timeout.ms"] = "6000", ["heartbeat.interval.ms"] = "1000" });
            var records = TestStream.Generate(20_000, 64, seed: 77);
            int events = records.Count(r => !r.IsLabel);
            for (int i = 0; i < 3; i++)
            {
                group.Start();
            }

            // The broker waits group.initial.rebalance.delay.ms (3 s) for members at the first join.
            var split = group.WaitForSplit(s => s.Max() - s.Min() <= 1, TimeSpan.FromSeconds(60), TimeSpan.FromSeconds(2));
            TestContext.Current.TestOutputHelper?.WriteLine($"real broker, 3 workers: split {string.Join("/", split)}");
            Topics.ProducePaced(bootstrap, group.EventsTopic, group.LabelsTopic, records, eventsPerSecond: 10_000, token);
            var predictions = Topics.ReadTimed(bootstrap, group.PredictionsTopic, events, TimeSpan.FromSeconds(90));
            Assert.Equal(events, predictions.Select(p => p.Id).Distinct().Count());
            Assert.True(group.WaitForCheckpointedLabels(events, TimeSpan.FromSeconds(60)), "not every label was joined and checkpointed\n" + group.Timeline());
            foreach (var m in group.Members)
            {
                Assert.Equal(0, m.Terminate(TimeSpan.FromSeconds(10)));
            }
        }
    }
}
