using System.Text;
using Confluent.Kafka;

namespace Driftline.Kafka.Tests.Support;

/// <summary>Producing test input to, and reading results from, a cluster.</summary>
internal static class Topics
{
    public static void Produce(string bootstrap, string topic, IEnumerable<(string? Key, string Value, long TimestampMs)> records)
    {
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = bootstrap, LingerMs = 5, EnableIdempotence = true })
            .SetLogHandler((_, _) => { }).Build();
        foreach (var (key, value, ts) in records)
        {
            var message = new Message<byte[]?, byte[]>
            {
                Key = key is null ? null : Encoding.UTF8.GetBytes(key),
                Value = Encoding.UTF8.GetBytes(value),
                Timestamp = new Timestamp(ts, TimestampType.CreateTime),
            };
            while (true)
            {
                try
                {
                    producer.Produce(topic, message);
                    break;
                }
                catch (ProduceException<byte[]?, byte[]> ex) when (ex.Error.Code == ErrorCode.Local_QueueFull)
                {
                    Thread.Sleep(5);
                }
            }
        }
        if (producer.Flush(TimeSpan.FromSeconds(30)) > 0)
        {
            throw new TimeoutException($"producing to {topic} did not finish");
        }
    }

    public static void ProduceStream(string bootstrap, string eventsTopic, string labelsTopic, IEnumerable<TestRecord> records)
    {
        // Each topic in time order, as events and their outcomes happen.
        var list = records.OrderBy(r => r.TimestampMs).ToList();
        Produce(bootstrap, eventsTopic, list.Where(r => !r.IsLabel).Select(r => ((string?)r.Key, r.Value, r.TimestampMs)));
        Produce(bootstrap, labelsTopic, list.Where(r => r.IsLabel).Select(r => ((string?)r.Key, r.Value, r.TimestampMs)));
    }

    /// <summary>
    /// Produces both topics through one producer in time order at about
    /// <paramref name="eventsPerSecond"/> events a second, as a live feed arrives.
    /// </summary>
    public static void ProducePaced(string bootstrap, string eventsTopic, string labelsTopic, IEnumerable<TestRecord> records, int eventsPerSecond, CancellationToken stop = default)
    {
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = bootstrap, LingerMs = 5, EnableIdempotence = true })
            .SetLogHandler((_, _) => { }).Build();
        var clock = System.Diagnostics.Stopwatch.StartNew();
        int sent = 0;
        foreach (var r in records.OrderBy(r => r.TimestampMs))
        {
            if (stop.IsCancellationRequested)
            {
                break;
            }
            var message = new Message<byte[]?, byte[]>
            {
                Key = Encoding.UTF8.GetBytes(r.Key),
                Value = Encoding.UTF8.GetBytes(r.Value),
                Timestamp = new Timestamp(r.TimestampMs, TimestampType.CreateTime),
            };
            producer.Produce(r.IsLabel ? labelsTopic : eventsTopic, message);
            if (!r.IsLabel && ++sent % 50 == 0)
            {
                double ahead = sent / (double)eventsPerSecond - clock.Elapsed.TotalSeconds;
                if (ahead > 0)
                {
                    Thread.Sleep(TimeSpan.FromSeconds(ahead));
                }
            }
        }
        if (producer.Flush(TimeSpan.FromSeconds(30)) > 0)
        {
            throw new TimeoutException("producing the paced stream did not finish");
        }
    }

    /// <summary>
    /// Reads <paramref name="topic"/> from the start until it holds <paramref name="distinctIds"/>
    /// distinct ids and has been quiet for half a second, or the time is up: every record with
    /// where it sits and when it was written (the producer's time).
    /// </summary>
    public static List<(int Partition, long Offset, long TimestampMs, string Id, string Value)> ReadTimed(string bootstrap, string topic, int distinctIds, TimeSpan limit)
    {
        using var consumer = Reader(bootstrap, topic);
        var records = new List<(int, long, long, string, string)>();
        var ids = new HashSet<string>(StringComparer.Ordinal);
        var deadline = DateTime.UtcNow + limit;
        var quietSince = DateTime.UtcNow;
        while (DateTime.UtcNow < deadline)
        {
            var r = consumer.Consume(TimeSpan.FromMilliseconds(100));
            if (r is not null && !r.IsPartitionEOF)
            {
                string value = Encoding.UTF8.GetString(r.Message.Value);
                string id = CheckpointFiles.Id(value);
                ids.Add(id);
                records.Add((r.Partition.Value, r.Offset.Value, r.Message.Timestamp.UnixTimestampMs, id, value));
                quietSince = DateTime.UtcNow;
            }
            else if (ids.Count >= distinctIds && DateTime.UtcNow - quietSince > TimeSpan.FromMilliseconds(500))
            {
                break;
            }
        }
        consumer.Close();
        return records;
    }

    /// <summary>Reads the first <paramref name="count"/> records of <paramref name="topic"/> with where each one sits.</summary>
    public static List<(int Partition, long Offset, string Value)> ReadPlaced(string bootstrap, string topic, int count, TimeSpan limit)
    {
        using var consumer = Reader(bootstrap, topic);
        var placed = new List<(int, long, string)>();
        var deadline = DateTime.UtcNow + limit;
        while (placed.Count < count && DateTime.UtcNow < deadline)
        {
            if (consumer.Consume(TimeSpan.FromMilliseconds(100)) is { IsPartitionEOF: false } r)
            {
                placed.Add((r.Partition.Value, r.Offset.Value, Encoding.UTF8.GetString(r.Message.Value)));
            }
        }
        consumer.Close();
        return placed;
    }

    /// <summary>Reads <paramref name="topic"/> from the start until <paramref name="until"/> says enough or the time is up.</summary>
    public static List<string> ReadAll(string bootstrap, string topic, Func<List<string>, bool> until, TimeSpan limit)
    {
        using var consumer = Reader(bootstrap, topic);
        var values = new List<string>();
        var deadline = DateTime.UtcNow + limit;
        var quietSince = DateTime.UtcNow;
        // Once enough has arrived, keep reading until the topic is quiet, so extra copies show.
        // The condition is checked only when no message came (it may be costly on big lists).
        while (DateTime.UtcNow < deadline)
        {
            var r = consumer.Consume(TimeSpan.FromMilliseconds(100));
            if (r is not null && !r.IsPartitionEOF)
            {
                values.Add(Encoding.UTF8.GetString(r.Message.Value));
                quietSince = DateTime.UtcNow;
            }
            else if (DateTime.UtcNow - quietSince > TimeSpan.FromMilliseconds(500) && until(values))
            {
                break;
            }
        }
        consumer.Close();
        return values;
    }

    /// <summary>A consumer of <paramref name="topic"/> from its start, in a group of its own.</summary>
    private static IConsumer<byte[]?, byte[]> Reader(string bootstrap, string topic)
    {
        var config = new ConsumerConfig
        {
            BootstrapServers = bootstrap,
            GroupId = "reader-" + Guid.NewGuid().ToString("N"),
            AutoOffsetReset = AutoOffsetReset.Earliest,
            EnableAutoCommit = false,
        };
        config.Set("group.protocol", "consumer");
        var consumer = new ConsumerBuilder<byte[]?, byte[]>(config).SetLogHandler((_, _) => { }).Build();
        consumer.Subscribe(topic);
        return consumer;
    }
}
