using System.Globalization;
using System.Text;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Features;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Demo;

namespace Driftline.Benchmarks;

/// <summary>
/// The evidence for the default <c>Model:HashBits</c>: for each size, the share of distinct
/// features that share their weight slot with another (a collision), the memory one model holds
/// after the stream, and the progressive log-loss of a default replay, on the demo and on a wide
/// high-cardinality stream (<see cref="WideStream"/>). Prints a Markdown table for the README.
/// </summary>
internal static class HashSweep
{
    private static readonly int[] Bits = [12, 14, 16, 18, 20, 22, 24];

    public static int Run(string[] args)
    {
        int wideEvents = args.Length > 0 ? int.Parse(args[0], CultureInfo.InvariantCulture) : 1_000_000;
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench");
        Directory.CreateDirectory(dir);
        string demo = Path.Combine(dir, "sweep-demo.jsonl");
        using (var output = File.Create(demo))
        {
            new DemoScenario(7).Write(output);
        }
        string wide = Path.Combine(dir, $"sweep-wide-{wideEvents}.jsonl");
        if (!File.Exists(wide))
        {
            new WideStream(7).Write(wide, wideEvents);
        }

        Console.WriteLine("| stream | distinct features | hash bits | slots | features in a shared slot | model memory (MB) | progressive log-loss |");
        Console.WriteLine("| --- | ---: | ---: | ---: | ---: | ---: | ---: |");
        foreach (var (name, file) in new[] { ("demo (60,000 orders)", demo), ($"wide ({wideEvents:N0} orders)", wide) })
        {
            byte[][] lines = File.ReadAllLines(file).Select(Encoding.UTF8.GetBytes).ToArray();
            HashSet<ulong> features = DistinctFeatures(lines);
            foreach (int bits in Bits)
            {
                double shared = SharedShare(features, bits);
                var (logLoss, megabytes) = Replay(lines, bits);
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"| {name} | {features.Count:N0} | {bits} | {1 << bits:N0} | {shared:P2} | {megabytes:0.0} | {logLoss:0.00000} |"));
            }
        }
        return 0;
    }

    // Every hashed feature an event can write: categoricals by name=value, numbers by name, the bias.
    private static HashSet<ulong> DistinctFeatures(byte[][] lines)
    {
        var parser = new EventParser();
        var record = new ParsedRecord();
        var seen = new HashSet<ulong> { FeatureHash.Bias };
        foreach (var line in lines)
        {
            if (parser.TryParse(line, record, out _) && record.Kind == RecordKind.Event)
            {
                foreach (var f in record.Features)
                {
                    seen.Add(f.Hash);
                }
            }
        }
        return seen;
    }

    // Share of features whose slot holds at least one other feature.
    private static double SharedShare(HashSet<ulong> features, int bits)
    {
        int mask = (1 << bits) - 1;
        var perSlot = new Dictionary<int, int>();
        foreach (ulong h in features)
        {
            int slot = FeatureHash.Slot(h, mask);
            perSlot[slot] = perSlot.GetValueOrDefault(slot) + 1;
        }
        long shared = perSlot.Values.Where(n => n > 1).Sum(n => (long)n);
        return shared / (double)features.Count;
    }

    private static (double LogLoss, double Megabytes) Replay(byte[][] lines, int bits)
    {
        GC.Collect();
        GC.WaitForPendingFinalizers();
        long before = GC.GetTotalMemory(forceFullCollection: true);
        var options = new DriftlineOptions { Model = { HashBits = bits } };
        var engine = new ScoringEngine(options, new NullSink());
        var parser = new EventParser();
        var record = new ParsedRecord();
        foreach (var line in lines)
        {
            if (parser.TryParse(line, record, out _))
            {
                engine.Process(record);
            }
        }
        double logLoss = engine.Totals.Current.LogLoss;
        // The pending labels are part of a run's memory but not of the hash size; the demo holds a
        // few thousand. Measured with the engine alive, after a full collection.
        long after = GC.GetTotalMemory(forceFullCollection: true);
        GC.KeepAlive(engine);
        return (logLoss, (after - before) / 1e6);
    }

    private sealed class NullSink : IScoringSink
    {
        public void OnPrediction(in Prediction prediction) { }

        public void OnAlert(AlertTransition alert) { }

        public void OnMetrics(in MetricsRow row) { }
    }
}
