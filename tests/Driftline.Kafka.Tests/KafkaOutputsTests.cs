using Confluent.Kafka;
using Driftline.Core.Alerts;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class KafkaOutputsTests
{
    [Fact]
    public void OnAlert_WithObserver_PublishesAndHandsTheAlertToTheObserver()
    {
        // The worker's webhook hook: every alert reaches the alerts topic and the observer.
        using var cluster = new MockCluster();
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = cluster.Bootstrap }).Build();
        var seen = new List<AlertTransition>();
        var outputs = new KafkaOutputs(producer, "ko-predictions", "ko-alerts", "ko-dead", new OutputCounts(), new DeliveryFailure(), seen.Add);
        var alert = new AlertTransition("calibration-gap", true, AlertMetric.CalibrationGap, 0.07, 0.06, 1_000, "o-1", DateTime.UtcNow.Ticks, 5_000);

        outputs.OnAlert(alert);
        producer.Flush(TimeSpan.FromSeconds(10));

        Assert.Same(alert, Assert.Single(seen));
        var published = Topics.ReadAll(cluster.Bootstrap, "ko-alerts", v => v.Count >= 1, TimeSpan.FromSeconds(20));
        Assert.Contains("\"rule\":\"calibration-gap\"", Assert.Single(published), StringComparison.Ordinal);
    }
}
