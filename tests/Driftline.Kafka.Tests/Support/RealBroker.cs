using DotNet.Testcontainers.Builders;
using Testcontainers.Kafka;
using Xunit;

namespace Driftline.Kafka.Tests.Support;

/// <summary>A real KRaft broker in a container for the tests that need one; the test is skipped, with the reason, where no Docker engine answers.</summary>
internal static class RealBroker
{
    /// <summary>Kafka 4.0 is the first release with the consumer group protocol the tests use on by default.</summary>
    public const string Image = "apache/kafka:4.0.0";

    /// <summary>Builds the container, or skips the calling test when there is no Docker engine.</summary>
    public static KafkaContainer BuildOrSkip(string test)
    {
        try
        {
            return new KafkaBuilder(Image).Build();
        }
        catch (DockerUnavailableException ex)
        {
            Assert.Skip($"no Docker engine for the {test}: {ex.Message}");
            throw; // not reached: Skip throws
        }
    }
}
