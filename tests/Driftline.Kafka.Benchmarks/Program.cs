using System.Globalization;
using Driftline.Kafka.Benchmarks;

// dotnet run -c Release --project tests/Driftline.Kafka.Benchmarks -- [events] [latency-rate] [part]
// Whole-pipeline figures through librdkafka's mock cluster on this machine: not a
// BenchmarkDotNet micro-benchmark (a broker round trip is the unit), so each figure is a
// median over repeated runs, next to a raw consume-only client in the same process and run.
// part: all (default), engine, throughput (7 repeats instead of 3), latency, checkpoint (one
// partition's snapshot and JSON, no Kafka), or group
// (1-4 real driftline processes in one group; not part of all). Arguments after the part,
// name=value, are librdkafka settings for the worker and the pass-through client alike (A/B runs).
int events = args.Length > 0 ? int.Parse(args[0], CultureInfo.InvariantCulture) : 60_000;
int rate = args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 50_000;
string part = args.Length > 2 ? args[2] : "all";
if (part is not ("all" or "engine" or "throughput" or "latency" or "group" or "checkpoint"))
{
    Console.Error.WriteLine($"unknown part '{part}': use all, engine, throughput, latency, checkpoint or group");
    return 2;
}
if (part is "checkpoint")
{
    // One partition's checkpoint cost with no Kafka: events is that partition's share.
    CheckpointCost.Run(events);
    return 0;
}
if (part is "group")
{
    try
    {
        GroupBenchmark.Run(events, maxWorkers: 4, repeats: 3);
        return 0;
    }
    catch (InvalidOperationException ex)
    {
        Console.Error.WriteLine(ex.Message);
        return 1;
    }
}
if (part is "all" or "engine")
{
    EngineOnly.Run(events);
}
if (part is "engine")
{
    return 0;
}
// For A/B runs of the garbage collector's latency mode (it only takes SustainedLowLatency with background collection on, DOTNET_gcConcurrent=1).
if (Environment.GetEnvironmentVariable("DRIFTLINE_BENCH_GC_LATENCY") is { Length: > 0 } mode)
{
    System.Runtime.GCSettings.LatencyMode = Enum.Parse<System.Runtime.GCLatencyMode>(mode);
}
var client = args.Skip(3).Select(a => a.Split('=', 2)).ToDictionary(kv => kv[0], kv => kv.Length > 1 ? kv[1] : "", StringComparer.Ordinal);
Console.WriteLine($"garbage collector: {(System.Runtime.GCSettings.IsServerGC ? "server" : "workstation")}, latency mode {System.Runtime.GCSettings.LatencyMode}; client settings: {(client.Count == 0 ? "the worker's defaults" : string.Join(", ", client.Select(kv => kv.Key + "=" + kv.Value)))}");
using var bench = new PipelineBenchmark(client);
try
{
    if (part is "all" or "throughput")
    {
        bench.Throughput(events, repeats: part == "throughput" ? 7 : 3);
    }
    if (part is "all" or "latency")
    {
        // Three alternating rounds: the pass-through client (the baseline: the mock and the
        // clients by themselves), the worker without a checkpoint in the window, then with one every 0.5 s.
        var rounds = new List<(LatencyRun PassThrough, LatencyRun Plain, LatencyRun Checkpoints)>();
        for (int run = 0; run < 3; run++)
        {
            var passThrough = bench.PassThroughLatency(rate, TimeSpan.FromSeconds(3));
            var plain = bench.Latency(rate, TimeSpan.FromSeconds(3), checkpointEvery: null);
            var checkpoints = bench.Latency(rate, TimeSpan.FromSeconds(3), checkpointEvery: TimeSpan.FromSeconds(0.5));
            rounds.Add((passThrough, plain, checkpoints));
        }
        Console.WriteLine("latency summary, p50 / p99 / max (ms) per round; worker p99 / pass-through p99 of the same round:");
        foreach (var (passThrough, plain, checkpoints) in rounds)
        {
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"  pass-through {passThrough.P50:0.0} / {passThrough.P99:0.0} / {passThrough.Max:0.0}; worker {plain.P50:0.0} / {plain.P99:0.0} / {plain.Max:0.0} ({plain.P99 / passThrough.P99:0.00}x); with checkpoints {checkpoints.P50:0.0} / {checkpoints.P99:0.0} / {checkpoints.Max:0.0} ({checkpoints.P99 / passThrough.P99:0.00}x)"));
        }
    }
}
catch (InvalidOperationException ex)
{
    Console.Error.WriteLine(ex.Message);
    return 1;
}
return 0;
