using Confluent.Kafka;

namespace Driftline.Kafka.Benchmarks;

/// <summary>Counts the predictions on a topic from its start, across several waits (warm-up, then the measured stream).</summary>
internal sealed class PredictionReader : IDisposable
{
    private readonly IConsumer<Ignore, Ignore> _consumer;
    private int _count;

    public PredictionReader(string bootstrap, string topic)
    {
        var config = new ConsumerConfig { BootstrapServers = bootstrap, GroupId = "bench-reader-" + Guid.NewGuid().ToString("N"), AutoOffsetReset = AutoOffsetReset.Earliest, EnableAutoCommit = false };
        config.Set("fetch.wait.max.ms", "10");
        _consumer = new ConsumerBuilder<Ignore, Ignore>(config).SetLogHandler((_, _) => { }).Build();
        _consumer.Subscribe(topic);
    }

    /// <summary>Reads until <paramref name="total"/> predictions have been seen since the start; throws after 5 minutes.</summary>
    public void ReadUntil(int total)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromMinutes(5);
        while (_count < total)
        {
            if (DateTime.UtcNow > deadline)
            {
                throw new InvalidOperationException($"only {_count} of {total} predictions in 5 minutes");
            }
            if (_consumer.Consume(TimeSpan.FromMilliseconds(100)) is { IsPartitionEOF: false })
            {
                _count++;
            }
        }
    }

    public void Dispose()
    {
        _consumer.Close();
        _consumer.Dispose();
    }
}
