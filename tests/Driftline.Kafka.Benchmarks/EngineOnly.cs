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
        for (int round = 0; round < 3; round++)
        {
            var engines = Enumerable.Range(0, Partitions).Select(_ => new ScoringEngine(new DriftlineOptions(), new NullSink())).ToArray();
            var parser = new EventParser();
            var record = new ParsedRecord();
            var clock = Stopwatch.StartNew();
            foreach (var (bytes, partition) in records)
            {
                if (parser.TryParse(bytes, record, out _))
                {
                    engines[partition].Process(record);
                }
            }
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"engine only (parse + score/learn, {Partitions} engines), round {round}: {records.Count / clock.Elapsed.TotalSeconds:N0} records/s"));
        }
    }

    private sealed class NullSink : IScoringSink
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
