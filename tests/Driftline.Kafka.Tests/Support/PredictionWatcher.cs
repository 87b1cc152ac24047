using System.Text;
using Confluent.Kafka;

namespace Driftline.Kafka.Tests.Support;

/// <summary>
/// Follows a predictions topic on a thread of its own and counts the distinct ids predicted so
/// far, so a test can act at a point in the stream while the workers run.
/// </summary>
internal sealed class PredictionWatcher : IDisposable
{
    private readonly CancellationTokenSource _stop = new();
    private readonly Thread _thread;
    private readonly HashSet<string> _ids = new(StringComparer.Ordinal);

    public PredictionWatcher(string bootstrap, string topic)
    {
        var config = new ConsumerConfig
        {
            BootstrapServers = bootstrap,
            GroupId = "watcher-" + Guid.NewGuid().ToString("N"),
            AutoOffsetReset = AutoOffsetReset.Earliest,
            EnableAutoCommit = false,
        };
        config.Set("fetch.wait.max.ms", "10");
        _thread = new Thread(() =>
        {
            using var consumer = new ConsumerBuilder<Ignore, byte[]>(config).SetLogHandler((_, _) => { }).Build();
            // Assigned by hand: no group, so no rebalance of the mock's to wait for.
            using (var admin = new DependentAdminClientBuilder(consumer.Handle).Build())
            {
                int partitions = admin.GetMetadata(topic, TimeSpan.FromSeconds(10)).Topics[0].Partitions.Count;
                consumer.Assign(Enumerable.Range(0, partitions).Select(p => new TopicPartitionOffset(topic, p, Offset.Beginning)));
            }
            while (!_stop.IsCancellationRequested)
            {
                if (consumer.Consume(TimeSpan.FromMilliseconds(20)) is { IsPartitionEOF: false } r)
                {
                    string id = CheckpointFiles.Id(Encoding.UTF8.GetString(r.Message.Value));
                    lock (_ids)
                    {
                        _ids.Add(id);
                    }
                }
            }
            consumer.Close();
        }) { IsBackground = true, Name = "prediction watcher" };
        _thread.Start();
    }

    /// <summary>Distinct ids predicted so far.</summary>
    public int Distinct
    {
        get
        {
            lock (_ids)
            {
                return _ids.Count;
            }
        }
    }

    public void Dispose()
    {
        _stop.Cancel();
        _thread.Join(TimeSpan.FromSeconds(10));
        _stop.Dispose();
    }
}
