using System.Diagnostics;
using System.Globalization;
using System.Text;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;

namespace Driftline.Kafka.Benchmarks;

/// <summary>The same records through parse and the engine alone, no Kafka: the core's share of the per-record cost.</summary>
internal static class EngineOnly
{
    public static void Run(int events)
    {
        var records = new List<byte[]>();
        var zones = new[] { "north", "south", "east", "west" };
        for (int index = 0; index < events; index++)
        {
            string key = "k" + (index % 64);
            records.Add(Encoding.UTF8.GetBytes(string.Create(CultureInfo.InvariantCulture,
                $"{{\"id\":\"{index}\",\"key\":\"{key}\",\"features\":{{\"zone\":\"{zones[index % 4]}\",\"distance_km\":{index % 97 / 10.0},\"items\":{index % 7},\"raining\":{(index % 3 == 0 ? "true" : "false")},\"tags\":[\"t{index % 5}\"]}}{(index % 2 == 0 ? ",\"label\":" + (index % 5 == 0 ? 1 : 0) : "")}}}")));
            int labelled = index - 50;
            if (labelled >= 0 && labelled % 2 == 1)
            {
                records.Add(Encoding.UTF8.GetBytes($"{{\"id\":\"{labelled}\",\"label\":{(labelled % 5 == 0 ? 1 : 0)}}}"));
            }
        }
        for (int round = 0; round < 3; round++)
        {
            var engine = new ScoringEngine(new DriftlineOptions(), new NullSink());
            var parser = new EventParser();
            var record = new ParsedRecord();
            var clock = Stopwatch.StartNew();
            foreach (var bytes in records)
            {
                if (parser.TryParse(bytes, record, out _))
                {
                    engine.Process(record);
                }
            }
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"engine only (parse + score/learn), round {round}: {records.Count / clock.Elapsed.TotalSeconds:N0} records/s"));
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
