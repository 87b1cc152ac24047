using System.Diagnostics;
using System.Text;
using System.Text.Json;
using Confluent.Kafka;
using Driftline.Kafka.Tests.Support;

namespace Driftline.Kafka.Benchmarks;

/// <summary>
/// Throughput of a group of 1 to N real <c>driftline run</c> processes on the mock cluster,
/// 16 events partitions and 16 labels partitions: the members join and split the partitions
/// first, then the whole stream is produced and the time runs until its last prediction is
/// read back. Reports records a second in total and per member, and the members' processor
/// time per record (from their own process counters, so the mock brokers, the producer and
/// the reader in this process are not in it).
/// </summary>
internal static class GroupBenchmark
{
    private const int Partitions = 16;

    public static void Run(int events, int maxWorkers, int repeats)
    {
        Console.WriteLine($"group: {events:N0} events over 64 keys, half the labels late on their own topic, {Partitions} partitions; median of {repeats}");
        Console.WriteLine("| members | records/s, total | records/s per member | member processor time per record | idle member's processor time (ms/s) | per record, less the members' idle time | split |");
        Console.WriteLine("| --- | --- | --- | --- | --- | --- | --- |");
        for (int workers = 1; workers <= maxWorkers; workers++)
        {
            var runs = Enumerable.Range(0, repeats).Select(_ => Measure(workers, events)).OrderBy(r => r.RecordsPerSecond).ToList();
            var median = runs[runs.Count / 2];
            Console.WriteLine($"| {workers} | {median.RecordsPerSecond / 1000:0}k | {median.RecordsPerSecond / workers / 1000:0}k | {median.MicrosecondsPerRecord:0.0} µs | {median.IdleMsPerSecond:0.0} | {median.BusyMicrosecondsPerRecord:0.0} µs | {median.Split} |");
        }
    }

    private sealed record Result(double RecordsPerSecond, double MicrosecondsPerRecord, double IdleMsPerSecond, double BusyMicrosecondsPerRecord, string Split);

    /// <summary>How long the members sit idle, owning their partitions, before the stream, to learn what each costs with nothing to do.</summary>
    private static readonly TimeSpan IdleWindow = TimeSpan.FromSeconds(3);

    private static Result Measure(int workers, int events)
    {
        using var cluster = new MockCluster();
        cluster.InitialRebalanceDelay(200);
        using var dir = new TempDir();
        string prefix = "bg";
        foreach (var topic in new[] { "-events", "-labels" })
        {
            cluster.CreateTopic(prefix + topic, Partitions);
        }
        cluster.CreateTopic(prefix + "-predictions", Partitions);
        string config = Path.Combine(dir.Path, "driftline.json");
        File.WriteAllText(config, JsonSerializer.Serialize(new
        {
            Kafka = new
            {
                Group = prefix + "-group",
                EventsTopic = prefix + "-events",
                LabelsTopic = prefix + "-labels",
                PredictionsTopic = prefix + "-predictions",
                AlertsTopic = prefix + "-alerts",
                DeadLetterTopic = prefix + "-dead",
                CheckpointDir = Path.Combine(dir.Path, "checkpoints"),
                // The mock's classic group waits session.timeout.ms - 1 s per rebalance round (Kafka README).
                Client = new Dictionary<string, string> { ["session.timeout.ms"] = "3000", ["heartbeat.interval.ms"] = "300", ["fetch.wait.max.ms"] = "10" },
            },
            Worker = new { MetricsPort = 0 },
        }));
        var members = Enumerable.Range(0, workers).Select(_ => new WorkerProcess(config, cluster.Bootstrap)).ToList();
        try
        {
            string split = WaitForSplit(members);
            var records = TestStream.Generate(events, keys: 64, seed: 7).OrderBy(r => r.TimestampMs).ToList();
            // Each member's own cost with nothing to do (its loop, librdkafka's fetches and
            // heartbeats, statistics): paid once per member whatever its share of the stream.
            var idleFrom = members.Select(m => m.ProcessorTime).ToList();
            var idleClock = Stopwatch.StartNew();
            Thread.Sleep(IdleWindow);
            double idle = members.Select((m, i) => (m.ProcessorTime - idleFrom[i]).TotalSeconds).Sum() / idleClock.Elapsed.TotalSeconds;
            var cpu = members.Select(m => m.ProcessorTime).ToList();
            var clock = Stopwatch.StartNew();
            Produce(cluster.Bootstrap, prefix, records);
            ReadPredictions(cluster.Bootstrap, prefix + "-predictions", events);
            var elapsed = clock.Elapsed;
            double used = members.Select((m, i) => (m.ProcessorTime - cpu[i]).TotalSeconds).Sum();
            foreach (var m in members)
            {
                m.Terminate(TimeSpan.FromSeconds(30));
            }
            double busy = used - idle * elapsed.TotalSeconds;
            return new Result(records.Count / elapsed.TotalSeconds, used * 1e6 / records.Count, idle * 1000 / workers, busy * 1e6 / records.Count, split);
        }
        finally
        {
            foreach (var m in members)
            {
                m.Dispose();
            }
        }
    }

    private static string WaitForSplit(List<WorkerProcess> members)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        string last = "";
        var since = DateTime.UtcNow;
        while (true)
        {
            var owned = members.SelectMany(m => m.Owned).ToList();
            string now = string.Join("/", members.Select(m => m.Owned.Count));
            if (now != last)
            {
                (last, since) = (now, DateTime.UtcNow);
            }
            else if (owned.Count == Partitions && owned.Distinct().Count() == Partitions && members.All(m => m.Owned.Count > 0) && DateTime.UtcNow - since > TimeSpan.FromSeconds(1))
            {
                return now;
            }
            if (DateTime.UtcNow > deadline || members.Any(m => m.HasExited))
            {
                throw new InvalidOperationException($"the members did not split the partitions: {now}\n{string.Join("\n----\n", members.Select(m => m.Errors))}");
            }
            Thread.Sleep(20);
        }
    }

    private static void Produce(string bootstrap, string prefix, List<TestRecord> records)
    {
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = bootstrap, LingerMs = 5 }).SetLogHandler((_, _) => { }).Build();
        foreach (var r in records)
        {
            var message = new Message<byte[]?, byte[]> { Key = Encoding.UTF8.GetBytes(r.Key), Value = Encoding.UTF8.GetBytes(r.Value), Timestamp = new Timestamp(r.TimestampMs, TimestampType.CreateTime) };
            while (true)
            {
                try
                {
                    producer.Produce(prefix + (r.IsLabel ? "-labels" : "-events"), message);
                    break;
                }
                catch (ProduceException<byte[]?, byte[]> ex) when (ex.Error.Code == ErrorCode.Local_QueueFull)
                {
                    producer.Poll(TimeSpan.FromMilliseconds(5));
                }
            }
        }
        producer.Flush(TimeSpan.FromSeconds(60));
    }

    private static void ReadPredictions(string bootstrap, string topic, int events)
    {
        var config = new ConsumerConfig { BootstrapServers = bootstrap, GroupId = "bench-reader-" + Guid.NewGuid().ToString("N"), AutoOffsetReset = AutoOffsetReset.Earliest, EnableAutoCommit = false };
        config.Set("fetch.wait.max.ms", "10");
        using var consumer = new ConsumerBuilder<Ignore, Ignore>(config).SetLogHandler((_, _) => { }).Build();
        consumer.Subscribe(topic);
        var deadline = DateTime.UtcNow + TimeSpan.FromMinutes(5);
        int count = 0;
        while (count < events)
        {
            if (DateTime.UtcNow > deadline)
            {
                throw new InvalidOperationException($"only {count} of {events} predictions in 5 minutes");
            }
            if (consumer.Consume(TimeSpan.FromMilliseconds(100)) is { IsPartitionEOF: false })
            {
                count++;
            }
        }
        consumer.Close();
    }
}
