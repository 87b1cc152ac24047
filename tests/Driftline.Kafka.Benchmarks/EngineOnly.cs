using System.Diagnostics;
using System.Globalization;
using System.Text;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;

namespace Driftline.Kafka.Benchmarks;

/// <summary>
/// The same records through parse and the engines alone, no Kafka: the core's share of the
/// per-record cost. As in the worker, there is one engine per partition (4), each key's
/// records going to one of them.
/// </summary>
internal static class EngineOnly
{
    private const int Partitions = 4;

    public static void Run(int events)
    {
        var records = new List<(byte[] Bytes, int Partition)>();
        var zones = new[] { "north", "south", "east", "west" };
        for (int index = 0; index < events; index++)
        {
            string key = "k" + (index % 64);
            records.Add((Encoding.UTF8.GetBytes(string.Create(CultureInfo.InvariantCulture,
                $"{{\"id\":\"{index}\",\"key\":\"{key}\",\"features\":{{\"zone\":\"{zones[index % 4]}\",\"distance_km\":{index % 97 / 10.0},\"items\":{index % 7},\"raining\":{(index % 3 == 0 ? "true" : "false")},\"tags\":[\"t{index % 5}\"]}}{(index % 2 == 0 ? ",\"label\":" + (index % 5 == 0 ? 1 : 0) : "")}}}")), index % 64 % Partitions));
            int labelled = index - 50;
            if (labelled >= 0 && labelled % 2 == 1)
            {
                records.Add((Encoding.UTF8.GetBytes($"{{\"id\":\"{labelled}\",\"label\":{(labelled % 5 == 0 ? 1 : 0)}}}"), labelled % 64 % Partitions));
            }
        }
        // Fresh engines each round; the first rounds also pay for JIT tiering, so the figure is
        // the median of the last three of six.
        var rates = new List<double>();
        long allocated = 0;
        for (int round = 0; round < 6; round++)
        {
            var engines = Enumerable.Range(0, Partitions).Select(_ => new ScoringEngine(new DriftlineOptions(), new NullSink())).ToArray();
            var parser = new EventParser();
            var record = new ParsedRecord();
            long before = GC.GetAllocatedBytesForCurrentThread();
            var clock = Stopwatch.StartNew();
            foreach (var (bytes, partition) in records)
            {
                if (parser.TryParse(bytes, record, out _))
                {
                    engines[partition].Process(record);
                }
            }
            rates.Add(records.Count / clock.Elapsed.TotalSeconds);
            allocated = GC.GetAllocatedBytesForCurrentThread() - before; // the last round's, after the engines' tables are grown
        }
        var last = rates.Skip(3).Order().ToList();
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"engine only (parse + score/learn, {Partitions} engines, one per partition), median of rounds 4-6: {last[1]:N0} records/s (rounds {string.Join(", ", rates.Select(r => r.ToString("N0", CultureInfo.InvariantCulture)))}); {1e6 / last[1]:0.00} µs and {allocated / (double)records.Count:0} bytes allocated a record on one thread"));
    }

    internal sealed class NullSink : IScoringSink
    {
        public void OnPrediction(in Prediction prediction)
        {
        }

        public void OnAlert(AlertTransition alert)
        {
        }

        public void OnMetrics(in MetricsRow row)
        {
        }
    }
}
