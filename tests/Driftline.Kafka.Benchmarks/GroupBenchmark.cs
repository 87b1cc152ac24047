using System.Diagnostics;
using System.Text;
using System.Text.Json;
using Confluent.Kafka;
using Driftline.Kafka.Tests.Support;

namespace Driftline.Kafka.Benchmarks;

/// <summary>
/// Throughput of a group of 1 to N real <c>driftline run</c> processes on the mock cluster,
/// 16 events partitions and 16 labels partitions: the members join and split the partitions,
/// take a warm-up stream (so the measured stream does not pay for compiling the code it runs),
/// sit idle for a while, then the measured stream is produced and the time runs until its last
/// prediction is read back. Reports records a second in total and per member, and the members'
/// processor time (from their own process counters, so the mock brokers, the producer and the
/// reader in this process are not in it), split into the fixed costs (start-up to owning
/// partitions, warm-up, idle) and the streaming part alone.
/// </summary>
internal static class GroupBenchmark
{
    private const int Partitions = 16;

    /// <summary>Events of the warm-up stream, before the measured one.</summary>
    private const int WarmUpEvents = 10_000;

    public static void Run(int events, int maxWorkers, int repeats)
    {
        Console.WriteLine($"group: {WarmUpEvents:N0} warm-up events, then {events:N0} measured events over 64 keys, half the labels late on their own topic, {Partitions} partitions; median (lowest-highest) of {repeats} runs");
        Console.WriteLine("| members | records/s, total | records/s per member | start-up, processor ms per member | warm-up and its settle, processor ms per member | idle, processor ms/s per member | streaming, µs per record | streaming less idle, µs per record | ratio to 1 member | splits |");
        Console.WriteLine("| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |");
        double? alone = null;
        for (int workers = 1; workers <= maxWorkers; workers++)
        {
            var runs = Enumerable.Range(0, repeats).Select(_ => Measure(workers, events)).ToList();
            foreach (var r in runs)
            {
                Console.Error.WriteLine($"group run: {workers} members: {r}");
            }
            double streaming = Median(runs.Select(r => r.BusyMicrosecondsPerRecord));
            alone ??= streaming;
            Console.WriteLine($"| {workers} | {Spread(runs, r => r.RecordsPerSecond / 1000, "0")}k | {Spread(runs, r => r.RecordsPerSecond / workers / 1000, "0")}k | {Spread(runs, r => r.StartUpMs, "0")} | {Spread(runs, r => r.WarmUpMs, "0")} | {Spread(runs, r => r.IdleMsPerSecond, "0.0")} | {Spread(runs, r => r.MicrosecondsPerRecord, "0.0")} | {Spread(runs, r => r.BusyMicrosecondsPerRecord, "0.0")} | {streaming / alone.Value:0.00} | {string.Join(", ", runs.Select(r => r.Split))} |");
        }
    }

    private static double Median(IEnumerable<double> values)
    {
        var sorted = values.Order().ToList();
        return sorted[sorted.Count / 2];
    }

    private static string Spread(List<Result> runs, Func<Result, double> value, string format)
    {
        var values = runs.Select(value).Order().ToList();
        return $"{Median(values).ToString(format, System.Globalization.CultureInfo.InvariantCulture)} ({values[0].ToString(format, System.Globalization.CultureInfo.InvariantCulture)}-{values[^1].ToString(format, System.Globalization.CultureInfo.InvariantCulture)})";
    }

    private sealed record Result(double RecordsPerSecond, double StartUpMs, double WarmUpMs, double IdleMsPerSecond, double MicrosecondsPerRecord, double BusyMicrosecondsPerRecord, string Split);

    /// <summary>How long the members sit idle, owning their partitions, before the stream, to learn what each costs with nothing to do.</summary>
    private static readonly TimeSpan IdleWindow = TimeSpan.FromSeconds(3);

    /// <summary>
    /// After a stream's last prediction: the labels after its last event wait up to
    /// <c>Kafka:LabelHold</c> (2 s) and then are graded, so the members' processor time is read this much later.
    /// </summary>
    private static readonly TimeSpan Settle = TimeSpan.FromSeconds(3);

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
            // Start-up: the runtime, the configuration, joining and the first assignment, once per member.
            var startUp = members.Select(m => m.ProcessorTime).ToList();
            // One stream, cut in time: the warm-up is every record before the measured stream's first event.
            var all = TestStream.Generate(WarmUpEvents + events, keys: 64, seed: 7).OrderBy(r => r.TimestampMs).ToList();
            long cut = TestStream.StartMs + WarmUpEvents * 10L;
            var warmUp = all.Where(r => r.TimestampMs < cut).ToList();
            var records = all.Where(r => r.TimestampMs >= cut).ToList();
            Produce(cluster.Bootstrap, prefix, warmUp);
            using var reader = new PredictionReader(cluster.Bootstrap, prefix + "-predictions");
            reader.ReadUntil(WarmUpEvents);
            Thread.Sleep(Settle);
            var warm = members.Select(m => m.ProcessorTime).ToList();
            // Each member's own cost with nothing to do (its loop, librdkafka's fetches and
            // heartbeats, statistics): paid once per member whatever its share of the stream.
            var idleClock = Stopwatch.StartNew();
            Thread.Sleep(IdleWindow);
            var cpu = members.Select(m => m.ProcessorTime).ToList();
            double idle = members.Select((m, i) => (cpu[i] - warm[i]).TotalSeconds).Sum() / idleClock.Elapsed.TotalSeconds;
            var clock = Stopwatch.StartNew();
            Produce(cluster.Bootstrap, prefix, records);
            reader.ReadUntil(WarmUpEvents + events);
            var elapsed = clock.Elapsed;
            Thread.Sleep(Settle);
            var end = members.Select(m => m.ProcessorTime).ToList();
            var measured = clock.Elapsed;
            double used = members.Select((m, i) => (end[i] - cpu[i]).TotalSeconds).Sum();
            foreach (var m in members)
            {
                m.Terminate(TimeSpan.FromSeconds(30));
            }
            double busy = used - idle * measured.TotalSeconds;
            double warmUsed = members.Select((m, i) => (warm[i] - startUp[i]).TotalSeconds).Sum();
            return new Result(records.Count / elapsed.TotalSeconds, startUp.Sum(t => t.TotalMilliseconds) / workers, warmUsed * 1000 / workers,
                idle * 1000 / workers, used * 1e6 / records.Count, busy * 1e6 / records.Count, split);
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
}
