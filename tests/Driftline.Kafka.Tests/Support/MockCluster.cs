using Confluent.Kafka;

namespace Driftline.Kafka.Tests.Support;

/// <summary>
/// librdkafka's in-process mock cluster (three brokers on 127.0.0.1), alive while this
/// object lives. Topics are created on first produce with <see cref="Partitions"/> partitions.
/// </summary>
internal sealed class MockCluster : IDisposable
{
    /// <summary>Partitions of every auto-created topic on the mock.</summary>
    public const int Partitions = 4;

    private readonly IProducer<byte[]?, byte[]> _host;

    /// <summary>Starts the cluster; <paramref name="roundTripMs"/> delays every broker response (librdkafka's test.mock.broker.rtt).</summary>
    public MockCluster(int roundTripMs = 0)
    {
        var config = new ProducerConfig();
        config.Set("test.mock.num.brokers", "3");
        if (roundTripMs > 0)
        {
            config.Set("test.mock.broker.rtt", roundTripMs.ToString(System.Globalization.CultureInfo.InvariantCulture));
        }
        _host = new ProducerBuilder<byte[]?, byte[]>(config).SetLogHandler((_, _) => { }).Build();
        using var admin = new DependentAdminClientBuilder(_host.Handle).Build();
        var metadata = admin.GetMetadata(TimeSpan.FromSeconds(10));
        Bootstrap = string.Join(",", metadata.Brokers.Select(b => $"{b.Host}:{b.Port}"));
    }

    /// <summary>The brokers' addresses, for other clients and processes.</summary>
    public string Bootstrap { get; }

    public void Dispose() => _host.Dispose();
}
