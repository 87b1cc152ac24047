using System.Diagnostics;
using System.Globalization;
using System.Text;
using Confluent.Kafka;
using Driftline.Core.Options;
using Driftline.Kafka.Options;
using Driftline.Kafka.Worker;

namespace Driftline.Kafka.Benchmarks;

/// <summary>Consume → score → produce against consume only, and event-to-prediction latency at a fixed rate.</summary>
internal sealed class PipelineBenchmark : IDisposable
{
    private readonly IProducer<byte[]?, byte[]> _host;
    private readonly string _bootstrap;
    private readonly string _checkpoints = Path.Combine(Path.GetTempPath(), "driftline-bench-" + Guid.NewGuid().ToString("N"));
    private readonly IReadOnlyDictionary<string, string> _client;
    private readonly GcPauses _gcPauses = new();
    private int _run;

    /// <summary>Starts the mock cluster; <paramref name="client"/> are librdkafka settings for the worker and the pass-through client alike.</summary>
    public PipelineBenchmark(IReadOnlyDictionary<string, string> client)
    {
        _client = client;
        var config = new ProducerConfig();
        config.Set("test.mock.num.brokers", "3");
        _host = new ProducerBuilder<byte[]?, byte[]>(config).SetLogHandler((_, _) => { }).Build();
        using var admin = new DependentAdminClientBuilder(_host.Handle).Build();
        _bootstrap = string.Join(",", admin.GetMetadata(TimeSpan.FromSeconds(10)).Brokers.Select(b => $"{b.Host}:{b.Port}"));
    }

    public void Throughput(int events, int repeats)
    {
        int records = Produce("bench-events", events, ratePerSecond: 0);
        RequireWholeLog("bench-events", records);
        RunWorker("bench-events", events, records); // warm-up: JIT tiers and the first group join
        RawConsume("bench-events", records, produceTo: "bench-copies-warm-up"); // its first run was half speed
        var raw = new List<Window>();
        var passThrough = new List<Window>();
        var worker = new List<Window>();
        for (int i = 0; i < repeats; i++)
        {
            Settle();
            raw.Add(RawConsume("bench-events", records));
            Settle();
            passThrough.Add(RawConsume("bench-events", records, produceTo: "bench-copies-" + i));
            Settle();
            worker.Add(RunWorker("bench-events", events, records));
        }
        double r = Median(raw.Select(x => x.Rate)), w = Median(worker.Select(x => x.Rate));
        static string Runs(List<Window> runs) => string.Join(", ", runs.Select(x => x.Rate.ToString("N0", CultureInfo.InvariantCulture)));
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"throughput, {events:N0} events + {records - events:N0} late labels, median of {repeats}: raw consume {r:N0} msg/s; consume→score→learn→produce {w:N0} msg/s; ratio {w / r:0.00} (raw runs {Runs(raw)}; worker runs {Runs(worker)})"));
        double p = Median(passThrough.Select(x => x.Rate));
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"pass-through (consume, produce each record unchanged with a delivery report, no parsing or model) {p:N0} msg/s, ratio {p / r:0.00} to raw consume: the Kafka work alone (runs {Runs(passThrough)})"));
        // Processor time of the whole process (clients, worker and the mock brokers) over the
        // same windows: what a message costs, which the machine's load moves less than the rate.
        static string Cost(string name, List<Window> runs) => string.Create(CultureInfo.InvariantCulture,
            $"{name} {Median(runs.Select(x => x.CpuMicros)):0.00} µs with {Median(runs.Select(x => x.Cores)):0.00} cores busy");
        Console.WriteLine($"processor time per message, median: {Cost("raw consume", raw)}; {Cost("pass-through", passThrough)}; {Cost("worker", worker)} (of {Environment.ProcessorCount} cores)");
        // Managed bytes the process allocated per message in the same windows (the mock brokers are native, so these are the clients' and the worker's).
        static string Bytes(string name, List<Window> runs) => string.Create(CultureInfo.InvariantCulture,
            $"{name} {Median(runs.Select(x => x.BytesPerMessage)):0} B ({Median(runs.Select(x => (double)x.Gen0)):0} gen0 collections)");
        Console.WriteLine($"allocated per message, median: {Bytes("raw consume", raw)}; {Bytes("pass-through", passThrough)}; {Bytes("worker", worker)}");
    }

    /// <summary>
    /// Collects the garbage of the runs before and lets their client threads wind down, so a
    /// collection or a closing client does not land in the next window (the raw client's is
    /// 50-150 ms long).
    /// </summary>
    private static void Settle()
    {
        GC.Collect();
        GC.WaitForPendingFinalizers();
        GC.Collect();
        Thread.Sleep(200);
    }

    /// <summary>One timed window: messages per second, processor time per message (µs) and cores kept busy.</summary>
    private readonly record struct Window(double Rate, double CpuMicros, double Cores, double BytesPerMessage, int Gen0)
    {
        public static Window Of(long messages, TimeSpan elapsed, TimeSpan cpu, long allocated, int gen0) =>
            new(messages / elapsed.TotalSeconds, cpu.TotalMicroseconds / messages, cpu / elapsed, allocated / (double)messages, gen0);
    }

    /// <summary>What the process has allocated and collected so far, to subtract at a window's end.</summary>
    private static (long Allocated, int Gen0) Heap() => (GC.GetTotalAllocatedBytes(precise: false), GC.CollectionCount(0));

    /// <summary>
    /// Latency of a paced stream into a warmed worker. With <paramref name="checkpointEvery"/>
    /// set, the worker checkpoints that often (several checkpoints in the window); without, none
    /// falls in the window (the label count and the period are set out of reach).
    /// </summary>
    public LatencyRun Latency(int rate, TimeSpan duration, TimeSpan? checkpointEvery)
    {
        Settle();
        string topic = "lat-events-" + _run;
        int events = (int)(rate * duration.TotalSeconds);
        var options = Options(topic);
        // The mock broker answers a fetch only when fetch.wait.max.ms (default 500) runs out, not
        // when data arrives as a real broker does; a short wait keeps that out of the figure.
        options.Client.TryAdd("fetch.wait.max.ms", LatencyFetchWaitMs);
        options.CheckpointEvery = checkpointEvery ?? TimeSpan.FromHours(1);
        options.CheckpointEveryLabels = checkpointEvery is null ? int.MaxValue : options.CheckpointEveryLabels;
        using var stop = new CancellationTokenSource();
        // Warm-up events have indexes past the timed ones, so the probe leaves them out.
        var probe = new LatencyProbe(events);
        var kafka = new KafkaWorker(options, new DriftlineOptions()) { Probe = probe };
        var thread = new Thread(() => kafka.Run(stop.Token)) { IsBackground = true };
        // Warm up on the same keys first, so the timed stream meets a running, allocated, jitted worker.
        int warm = Produce(topic, 20_000, 0, firstIndex: 1_000_000);
        thread.Start();
        while (kafka.Stats.Partitions < 4 || kafka.Stats.EventsIn < warm)
        {
            Thread.Sleep(5);
        }
        long checkpointsBefore = kafka.Stats.Checkpoints;
        string name = checkpointEvery is { } every ? string.Create(CultureInfo.InvariantCulture, $"worker, checkpoints every {every.TotalSeconds:0.0} s") : "worker, no checkpoint";
        var run = TimedWindow(name, topic, options.PredictionsTopic, probe, events, rate, duration);
        long partitionCheckpoints = kafka.Stats.Checkpoints - checkpointsBefore;
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"  {partitionCheckpoints} partition checkpoints in the window; the last one held the loop {kafka.Stats.LastCheckpointMs:0.00} ms; off the loop: acknowledgements {kafka.Stats.LastFlushMs:0.0} ms, snapshots {kafka.Stats.LastSnapshotMs:0.0} ms (summed over partitions), cut to last file {kafka.Stats.LastWriteMs:0.0} ms"));
        stop.Cancel();
        thread.Join();
        Console.WriteLine(probe.Breakdown());
        return run;
    }

    /// <summary>
    /// The same paced stream through the pass-through client instead of the worker: a consumer
    /// with the worker's fetch settings that produces each record unchanged (with the worker's
    /// producer settings and a delivery report) to a topic the same reader reads. What the mock
    /// brokers, the clients and this machine take by themselves, the latency no worker can beat here.
    /// </summary>
    public LatencyRun PassThroughLatency(int rate, TimeSpan duration)
    {
        // The last worker's state is garbage now: collected here, not in this window (it was: a
        // 168 ms gen2 pause in a pass-through window that allocates nothing long-lived).
        Settle();
        string topic = "lat-events-" + _run++;
        string copies = topic + "-copies";
        int events = (int)(rate * duration.TotalSeconds);
        var probe = new LatencyProbe(events);
        using var producer = new ProducerBuilder<byte[]?, byte[]>(PassThroughProducer()).SetLogHandler((_, _) => { }).Build();
        var config = PassThroughConsumer();
        config.Set("fetch.wait.max.ms", _client.GetValueOrDefault("fetch.wait.max.ms", LatencyFetchWaitMs));
        using var consumer = new ConsumerBuilder<byte[]?, byte[]>(config).SetLogHandler((_, _) => { }).Build();
        int warm = Produce(topic, 20_000, 0, firstIndex: 1_000_000);
        long consumed = 0;
        using var stop = new CancellationTokenSource();
        Action<DeliveryReport<byte[]?, byte[]>> handler = _ => { };
        var thread = new Thread(() =>
        {
            consumer.Subscribe(topic);
            while (!stop.IsCancellationRequested)
            {
                var r = consumer.Consume(TimeSpan.FromMilliseconds(100));
                if (r is null || r.IsPartitionEOF)
                {
                    continue;
                }
                Send(producer, copies, r.Message.Key, r.Message.Value, handler);
                Volatile.Write(ref consumed, consumed + 1);
            }
        }) { IsBackground = true };
        thread.Start();
        while (Volatile.Read(ref consumed) < warm)
        {
            Thread.Sleep(5);
        }
        var run = TimedWindow("pass-through", topic, copies, probe, events, rate, duration);
        stop.Cancel();
        thread.Join();
        consumer.Close();
        return run;
    }

    /// <summary>
    /// The timed window both latency runs share: the reader joins, the paced producer sends
    /// <paramref name="events"/> at <paramref name="rate"/>, and the garbage collections of the
    /// whole process in the window are counted.
    /// </summary>
    private LatencyRun TimedWindow(string name, string topic, string outputTopic, LatencyProbe probe, int events, int rate, TimeSpan duration)
    {
        var reader = new Thread(() => ReadLatencies(outputTopic, probe, events)) { IsBackground = true };
        reader.Start();
        Thread.Sleep(500); // the reader joins its group
        var pauseBefore = GC.GetTotalPauseDuration();
        long allocatedBefore = GC.GetTotalAllocatedBytes(precise: false);
        _gcPauses.Take();
        int[] collectionsBefore = [GC.CollectionCount(0), GC.CollectionCount(1), GC.CollectionCount(2)];
        Produce(topic, events, rate, probe.Sent, firstIndex: 1, acked: probe.Acked);
        reader.Join(TimeSpan.FromSeconds(60));
        var pause = GC.GetTotalPauseDuration() - pauseBefore;
        long allocated = GC.GetTotalAllocatedBytes(precise: false) - allocatedBefore;
        Thread.Sleep(50); // the runtime's events reach the listener a little later
        string reasons = _gcPauses.DeepReasons();
        var pauses = _gcPauses.Take();
        int[] collections = [GC.CollectionCount(0) - collectionsBefore[0], GC.CollectionCount(1) - collectionsBefore[1], GC.CollectionCount(2) - collectionsBefore[2]];
        var latencies = new List<double>(events);
        for (int i = 1; i <= events; i++)
        {
            if (probe.Read[i] != 0)
            {
                latencies.Add(Stopwatch.GetElapsedTime(probe.Sent[i], probe.Read[i]).TotalMilliseconds);
            }
        }
        latencies.Sort();
        var run = new LatencyRun(name, Pct(latencies, 0.50), Pct(latencies, 0.99), latencies.Count == 0 ? double.NaN : latencies[^1],
            collections, pause.TotalMilliseconds, pauses.Count == 0 ? 0 : pauses.Max(), allocated);
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"latency, {name}, at {rate:N0} ev/s for {duration.TotalSeconds:0} s ({latencies.Count:N0} of {events:N0} read back): p50 {run.P50:0.0} ms, p99 {run.P99:0.0} ms, max {run.Max:0.0} ms (event produced → its output consumed)"));
        // The last blocking gen2 collection: how much it kept (marked and, when compacting, moved), which its pause grows with.
        var full = GC.GetGCMemoryInfo(GCKind.FullBlocking);
        string gen2 = collections[2] == 0 ? "" : string.Create(CultureInfo.InvariantCulture,
            $"; the last full blocking collection kept {full.PromotedBytes / 1e6:0} MB of a {full.HeapSizeBytes / 1e6:0} MB heap ({(full.Compacted ? "compacting" : "sweeping")})");
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"  garbage collections in the window (the whole process): {collections[0]} gen0, {collections[1]} gen1, {collections[2]} gen2, paused {run.PausedMs:0.0} ms in all, longest {run.LongestPauseMs:0.0} ms (events: {pauses.Count}); {allocated / 1e6:0} MB allocated; gen1/gen2 reasons: {reasons}{gen2}"));
        return run;
    }

    /// <summary>The worker's and the pass-through's <c>fetch.wait.max.ms</c> in latency runs, unless given.</summary>
    private const string LatencyFetchWaitMs = "10";

    private KafkaOptions Options(string topic) => new()
    {
        Bootstrap = _bootstrap,
        Group = "bench-worker-" + _run++,
        EventsTopic = topic,
        PredictionsTopic = topic + "-predictions-" + _run,
        AlertsTopic = topic + "-alerts",
        DeadLetterTopic = topic + "-dead",
        CheckpointDir = _checkpoints + "-" + _run,
        Client = new(_client) { ["group.protocol"] = "consumer" },
    };

    private Window RunWorker(string topic, int events, int records)
    {
        using var stop = new CancellationTokenSource();
        var worker = new KafkaWorker(Options(topic), new DriftlineOptions());
        var thread = new Thread(() => worker.Run(stop.Token)) { IsBackground = true };
        thread.Start();
        // Poll with sleeps: a spinning observer would take one of the two cores from the worker.
        // Steady state: time the last two thirds, after start-up (group join, model allocation, JIT).
        while (worker.Stats.EventsIn < records / 3)
        {
            Thread.Sleep(1);
        }
        long from = worker.Stats.EventsIn;
        var heap = Heap();
        var cpu = Environment.CpuUsage.TotalTime;
        var clock = Stopwatch.StartNew();
        while (worker.Stats.Predictions < events || worker.Stats.EventsIn < records)
        {
            Thread.Sleep(1);
        }
        var window = Window.Of(records - from, clock.Elapsed, Environment.CpuUsage.TotalTime - cpu, Heap().Allocated - heap.Allocated, Heap().Gen0 - heap.Gen0);
        stop.Cancel();
        thread.Join();
        return window;
    }

    /// <summary>
    /// Consumes <paramref name="events"/> records doing nothing with them, or, with
    /// <paramref name="produceTo"/>, producing each one unchanged there with a delivery report, as
    /// the worker produces its predictions (and waiting for every report before the window ends).
    /// </summary>
    private Window RawConsume(string topic, int events, string? produceTo = null)
    {
        using var producer = produceTo is null ? null
            : new ProducerBuilder<byte[]?, byte[]>(PassThroughProducer()).SetLogHandler((_, _) => { }).Build();
        long delivered = 0;
        Action<DeliveryReport<byte[]?, byte[]>> handler = _ => Interlocked.Increment(ref delivered);
        var config = producer is null ? RawConsumer() : PassThroughConsumer();
        using var consumer = new ConsumerBuilder<byte[]?, byte[]>(config).SetLogHandler((_, _) => { }).Build();
        consumer.Subscribe(topic);
        int got = 0;
        Stopwatch? clock = null;
        TimeSpan cpu = default;
        (long Allocated, int Gen0) heap = default;
        while (got < events)
        {
            var r = consumer.Consume(TimeSpan.FromMilliseconds(100));
            if (r is null || r.IsPartitionEOF)
            {
                continue;
            }
            got++;
            if (producer is not null)
            {
                Send(producer, produceTo!, r.Message.Key, r.Message.Value, handler);
            }
            if (got == events / 3)
            {
                heap = Heap();
                cpu = Environment.CpuUsage.TotalTime;
                clock = Stopwatch.StartNew(); // the same steady-state window as the worker's
            }
        }
        producer?.Flush(TimeSpan.FromSeconds(60));
        var window = Window.Of(events - events / 3, clock!.Elapsed, Environment.CpuUsage.TotalTime - cpu, Heap().Allocated - heap.Allocated, Heap().Gen0 - heap.Gen0);
        consumer.Close();
        return window;
    }

    /// <summary>
    /// Produces <paramref name="events"/> events keyed over 64 models; even ones carry their
    /// label, odd ones get a label-only record 50 events later. Returns the records produced.
    /// </summary>
    private int Produce(string topic, int events, int ratePerSecond, long[]? sent = null, int firstIndex = 0, long[]? acked = null)
    {
        int produced = 0;
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = _bootstrap, LingerMs = 1 }).SetLogHandler((_, _) => { }).Build();
        var zones = new[] { "north", "south", "east", "west" };
        if (sent is not null)
        {
            // A new producer's first records wait for its connections and metadata (50-190 ms here,
            // the first quarter second of every window): warm it on every key first, untimed, so the
            // window measures the worker and not the benchmark's own start-up.
            for (int k = 0; k < 64; k++)
            {
                Send(producer, topic, "k" + k, string.Create(CultureInfo.InvariantCulture, $"{{\"id\":\"{2_000_000 + k}\",\"key\":\"k{k}\",\"features\":{{\"zone\":\"north\"}}}}"));
            }
            producer.Flush(TimeSpan.FromSeconds(60));
        }
        var clock = Stopwatch.StartNew();
        for (int i = 0; i < events; i++)
        {
            if (ratePerSecond > 0)
            {
                // Paced: hold each event until its millisecond comes (50 events a millisecond
                // at 50,000/s). Sleeping, not spinning: a spin loop kept one of the two cores
                // busy for the whole window, away from the worker, librdkafka and the mock brokers.
                double due = i / (double)ratePerSecond;
                while (clock.Elapsed.TotalSeconds < due)
                {
                    Thread.Sleep(1);
                }
            }
            int index = firstIndex + i;
            string key = "k" + (index % 64);
            string value = string.Create(CultureInfo.InvariantCulture,
                $"{{\"id\":\"{index}\",\"key\":\"{key}\",\"features\":{{\"zone\":\"{zones[index % 4]}\",\"distance_km\":{index % 97 / 10.0},\"items\":{index % 7},\"raining\":{(index % 3 == 0 ? "true" : "false")},\"tags\":[\"t{index % 5}\"]}}{(index % 2 == 0 ? ",\"label\":" + (index % 5 == 0 ? 1 : 0) : "")}}}");
            if (sent is not null)
            {
                sent[index] = Stopwatch.GetTimestamp();
            }
            Action<DeliveryReport<byte[]?, byte[]>>? onAck = acked is null ? null : _ => acked[index] = Stopwatch.GetTimestamp();
            Send(producer, topic, Encoding.UTF8.GetBytes(key), Encoding.UTF8.GetBytes(value), onAck);
            produced++;
            int labelled = index - 50;
            if (labelled >= firstIndex && labelled % 2 == 1)
            {
                Send(producer, topic, "k" + (labelled % 64), string.Create(CultureInfo.InvariantCulture, $"{{\"id\":\"{labelled}\",\"label\":{(labelled % 5 == 0 ? 1 : 0)}}}"));
                produced++;
            }
        }
        producer.Flush(TimeSpan.FromSeconds(60));
        return produced;
    }

    private static void Send(IProducer<byte[]?, byte[]> producer, string topic, string key, string value) =>
        Send(producer, topic, Encoding.UTF8.GetBytes(key), Encoding.UTF8.GetBytes(value), null);

    private static void Send(IProducer<byte[]?, byte[]> producer, string topic, byte[]? key, byte[] value, Action<DeliveryReport<byte[]?, byte[]>>? handler)
    {
        var message = new Message<byte[]?, byte[]> { Key = key, Value = value };
        while (true)
        {
            try
            {
                producer.Produce(topic, message, handler);
                return;
            }
            catch (ProduceException<byte[]?, byte[]> ex) when (ex.Error.Code == ErrorCode.Local_QueueFull)
            {
                Thread.Sleep(1);
            }
        }
    }

    private void ReadLatencies(string topic, LatencyProbe probe, int events)
    {
        var config = new ConsumerConfig { BootstrapServers = _bootstrap, GroupId = "bench-lat-" + _run++, AutoOffsetReset = AutoOffsetReset.Earliest, EnableAutoCommit = false, FetchWaitMaxMs = 5 };
        config.Set("group.protocol", "consumer");
        using var consumer = new ConsumerBuilder<byte[]?, byte[]>(config).SetLogHandler((_, _) => { }).Build();
        consumer.Subscribe(topic);
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        int read = 0;
        while (read < events && DateTime.UtcNow < deadline)
        {
            var r = consumer.Consume(TimeSpan.FromMilliseconds(100));
            if (r is null || r.IsPartitionEOF)
            {
                continue;
            }
            long now = Stopwatch.GetTimestamp();
            int index = LatencyProbe.EventIndex(r.Message.Value);
            if (index >= 1 && index <= events && probe.Sent[index] != 0 && probe.Read[index] == 0)
            {
                probe.ReadBack(index, r.Partition.Value, r.Offset.Value, now);
                read++;
            }
        }
        consumer.Close();
    }

    /// <summary>
    /// Stops with a clear message when the mock brokers dropped the start of the topic: each
    /// mock partition keeps at most 5 MiB or 100,000 message sets (librdkafka, src/rdkafka_mock.c,
    /// rd_kafka_mock_partition_init), and the timed clients would then wait for ever for records
    /// that are gone.
    /// </summary>
    private void RequireWholeLog(string topic, int records)
    {
        var config = new ConsumerConfig { BootstrapServers = _bootstrap, GroupId = "bench-check" };
        using var consumer = new ConsumerBuilder<byte[]?, byte[]>(config).SetLogHandler((_, _) => { }).Build();
        long kept = 0;
        using var admin = new DependentAdminClientBuilder(_host.Handle).Build();
        foreach (int partition in admin.GetMetadata(topic, TimeSpan.FromSeconds(10)).Topics[0].Partitions.Select(p => p.PartitionId))
        {
            var marks = consumer.QueryWatermarkOffsets(new TopicPartition(topic, partition), TimeSpan.FromSeconds(10));
            if (marks.Low.Value > 0)
            {
                throw new InvalidOperationException(string.Create(CultureInfo.InvariantCulture,
                    $"the mock cluster dropped the first {marks.Low.Value:N0} records of {topic} partition {partition} (it keeps about 5 MiB a partition): use fewer events (60,000 fits)"));
            }
            kept += marks.High.Value;
        }
        if (kept != records)
        {
            throw new InvalidOperationException($"{topic} holds {kept:N0} records, {records:N0} were produced");
        }
    }

    private ConsumerConfig RawConsumer()
    {
        var config = new ConsumerConfig { BootstrapServers = _bootstrap, GroupId = "bench-raw-" + _run++, AutoOffsetReset = AutoOffsetReset.Earliest, EnableAutoCommit = false };
        config.Set("group.protocol", "consumer");
        return config;
    }

    /// <summary>
    /// The worker's consumer setting too (src/Driftline.Kafka/Options/ClientSettings.cs): the
    /// pass-through does no more Kafka work per record than the worker does.
    /// </summary>
    private ConsumerConfig PassThroughConsumer()
    {
        var config = RawConsumer();
        config.Set("dotnet.consumer.consume.result.fields", "timestamp");
        foreach (var (name, value) in _client)
        {
            config.Set(name, value);
        }
        return config;
    }

    /// <summary>The worker's producer settings (src/Driftline.Kafka/Options/ClientSettings.cs) that bear on its cost.</summary>
    private ProducerConfig PassThroughProducer()
    {
        var config = new ProducerConfig { BootstrapServers = _bootstrap, LingerMs = 5, EnableIdempotence = true };
        config.Set("dotnet.producer.delivery.report.fields", "status");
        foreach (var (name, value) in _client)
        {
            config.Set(name, value);
        }
        return config;
    }

    private static double Median(IEnumerable<double> values)
    {
        var sorted = values.Order().ToList();
        return sorted[sorted.Count / 2];
    }

    private static double Pct(List<double> sorted, double q) => sorted.Count == 0 ? double.NaN : sorted[Math.Min(sorted.Count - 1, (int)(q * sorted.Count))];

    public void Dispose()
    {
        _gcPauses.Dispose();
        _host.Dispose();
        foreach (var dir in Directory.GetDirectories(Path.GetTempPath(), Path.GetFileName(_checkpoints) + "*"))
        {
            Directory.Delete(dir, recursive: true);
        }
    }
}
