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

    [Fact]
    public void DeadLetter_TextLongerThanTheCut_IsCutOnACharacterBoundaryAndStaysText()
    {
        // 7,999 ASCII bytes then a two-byte 'é' straddling byte 8,000: a cut at a byte count
        // splits the sequence, and the record would be shown as base64 although it is text.
        using var cluster = new MockCluster();
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = cluster.Bootstrap }).Build();
        var outputs = new KafkaOutputs(producer, "ko-predictions", null, "ko-dead-text", new OutputCounts(), new DeliveryFailure());
        string text = new string('a', 7_999) + "é" + new string('b', 500);

        outputs.DeadLetter("malformed JSON", "events", 0, 7, null, System.Text.Encoding.UTF8.GetBytes(text));
        producer.Flush(TimeSpan.FromSeconds(10));

        var letter = System.Text.Json.JsonDocument.Parse(Assert.Single(Topics.ReadAll(cluster.Bootstrap, "ko-dead-text", v => v.Count >= 1, TimeSpan.FromSeconds(20)))).RootElement;
        Assert.False(letter.TryGetProperty("raw_encoding", out _), "valid UTF-8 stays text");
        Assert.Equal(new string('a', 7_999), letter.GetProperty("raw").GetString());
    }

    [Fact]
    public void DeadLetter_NotUtf8_IsBase64OfTheFirstBytes()
    {
        using var cluster = new MockCluster();
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = cluster.Bootstrap }).Build();
        var outputs = new KafkaOutputs(producer, "ko-predictions", null, "ko-dead-bytes", new OutputCounts(), new DeliveryFailure());
        byte[] value = [0x7b, 0xff, 0xfe, 0x41];

        outputs.DeadLetter("malformed JSON", "events", 0, 8, null, value);
        producer.Flush(TimeSpan.FromSeconds(10));

        var letter = System.Text.Json.JsonDocument.Parse(Assert.Single(Topics.ReadAll(cluster.Bootstrap, "ko-dead-bytes", v => v.Count >= 1, TimeSpan.FromSeconds(20)))).RootElement;
        Assert.Equal("base64", letter.GetProperty("raw_encoding").GetString());
        Assert.Equal(value, Convert.FromBase64String(letter.GetProperty("raw").GetString()!));
    }
}
