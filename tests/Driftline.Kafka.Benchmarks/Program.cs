using Driftline.Kafka.Benchmarks;

// dotnet run -c Release --project tests/Driftline.Kafka.Benchmarks -- [events] [latency-rate]
// Whole-pipeline figures through librdkafka's mock cluster on this machine: not a
// BenchmarkDotNet micro-benchmark (a broker round trip is the unit), so each figure is a
// median over repeated runs, next to a raw consume-only client in the same process and run.
int events = args.Length > 0 ? int.Parse(args[0], System.Globalization.CultureInfo.InvariantCulture) : 60_000;
int rate = args.Length > 1 ? int.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture) : 50_000;
EngineOnly.Run(events);
using var bench = new PipelineBenchmark();
bench.Throughput(events, repeats: 3);
bench.Latency(rate, TimeSpan.FromSeconds(3));
