using Driftline.Kafka.Options;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class ClientSettingsTests
{
    private static KafkaOptions Options() => new()
    {
        Bootstrap = "127.0.0.1:9092",
        Client = new()
        {
            ["sasl.password"] = "hunter2",
            ["sasl.jaas.config"] = "org.example required password=\"hunter2\";",
            ["ssl.key.password"] = "hunter2",
            ["sasl.oauthbearer.client.secret"] = "hunter2",
            ["security.protocol"] = "SASL_SSL",
            ["enable.auto.offset.store"] = "false",
        },
    };

    [Fact]
    public void Masked_SecretSettings_NeverShowTheirValues()
    {
        var masked = ClientSettings.Masked(Options());
        Assert.DoesNotContain(masked.Values, v => v.Contains("hunter2", StringComparison.Ordinal));
        Assert.Equal("SASL_SSL", masked["security.protocol"]);
    }

    [Fact]
    public void EventsConsumer_AnySettings_AutoCommitAndOffsetStoreForcedOff()
    {
        var config = ClientSettings.EventsConsumer(Options()).ToDictionary(kv => kv.Key, kv => kv.Value);
        Assert.Equal("false", config["enable.auto.commit"]);
        Assert.Equal("false", config["enable.auto.offset.store"]);
        Assert.Equal("SASL_SSL", config["security.protocol"]);
        Assert.Equal("127.0.0.1:9092", config["bootstrap.servers"]);
    }

    [Fact]
    public void Consumers_ResultFieldsSetToNone_StillGetTheTimestampsTheMergeNeeds()
    {
        // The time-order merge of events and labels orders by message timestamp, so a
        // pass-through setting must not switch timestamps off.
        var options = Options();
        options.Client["dotnet.consumer.consume.result.fields"] = "none";
        foreach (var consumer in new[] { ClientSettings.EventsConsumer(options), ClientSettings.LabelsConsumer(options) })
        {
            Assert.Equal("timestamp", consumer.Get("dotnet.consumer.consume.result.fields"));
        }
    }

    [Fact]
    public void Validate_OutputTopicIsAnInputTopic_IsAnError()
    {
        var options = Options();
        options.PredictionsTopic = options.EventsTopic;
        var error = Assert.Single(options.Validate());
        Assert.Equal("Kafka", error.Option);
    }

    [Fact]
    public void Validate_NoBootstrap_NeedsNothingElse()
    {
        Assert.Empty(new KafkaOptions { EventsTopic = "" }.Validate());
    }
}
