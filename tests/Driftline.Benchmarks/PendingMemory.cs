using System.Text;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Demo;

namespace Driftline.Benchmarks;

/// <summary>
/// Bytes a waiting prediction costs: fills the pending store of one engine with the first
/// <c>N</c> events of the wide stream (eleven hashed features each, the inline label removed so
/// every event waits), and reads <see cref="GC.GetTotalMemory(bool)"/> after a full collection
/// before and after. The difference over the predictions waiting is the cost of one, its id
/// key included (the store keeps the id's bytes; the line and string it came from are gone).
/// The store's table of locations is made with the engine, before the first reading, so its
/// size is measured apart (an empty store of the same capacity) and added. The engine's memory
/// of ids that came with their labels is reported beside it, not counted: it holds none here.
/// </summary>
internal static class PendingMemory
{
    private sealed class NullSink : IScoringSink
    {
        public void OnPrediction(in Prediction prediction) { }

        public void OnAlert(AlertTransition alert) { }

        public void OnMetrics(in MetricsRow row) { }
    }

    public static int Run(string[] args)
    {
        int events = args.Length > 0 ? int.Parse(args[0], System.Globalization.CultureInfo.InvariantCulture) : 1_000_000;
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench");
        Directory.CreateDirectory(dir);
        // The demo stream (event times, late labels, fewer features) for the figure its users see.
        bool demo = args.Contains("demo");
        string file = Path.Combine(dir, demo ? $"demo-orders-{events}.jsonl" : $"wide-{events}.jsonl");
        if (!File.Exists(file))
        {
            if (demo)
            {
                using var output = File.Create(file + ".part");
                new DemoScenario(7) { Orders = events }.Write(output);
            }
            else
            {
                new WideStream(7).Write(file + ".part", events);
            }
            File.Move(file + ".part", file, overwrite: true);
        }
        long s0 = GC.GetTotalMemory(forceFullCollection: true);
        var emptyStore = new PendingLabelStore(events, TimeSpan.FromDays(1));
        long storeFixed = GC.GetTotalMemory(forceFullCollection: true) - s0;
        GC.KeepAlive(emptyStore);
        s0 = GC.GetTotalMemory(forceFullCollection: true);
        var emptyIds = new RecentIds(events);
        long idsFixed = GC.GetTotalMemory(forceFullCollection: true) - s0;
        GC.KeepAlive(emptyIds);
        var options = new DriftlineOptions();
        options.Labels.MaxPending = events;
        // Nothing ages out while the store fills (the demo's events span weeks).
        options.Labels.MaxAge = TimeSpan.FromDays(100_000);
        var engine = new ScoringEngine(options, new NullSink());
        var parser = new EventParser();
        var record = new ParsedRecord();
        long before = GC.GetTotalMemory(forceFullCollection: true);
        long idBytes = 0;
        long features = 0;
        foreach (string line in File.ReadLines(file))
        {
            if (parser.TryParse(Encoding.UTF8.GetBytes(line), record, out _) && record.Kind == RecordKind.Event)
            {
                record.Label = -1;
                engine.Process(record);
                // The store keeps the id as UTF-8 after a one-byte length (ids under 64 bytes).
                idBytes += 1 + Encoding.UTF8.GetByteCount(record.Id!);
                features += record.Features.Length + 1;
            }
        }
        long after = GC.GetTotalMemory(forceFullCollection: true);
        int waiting = engine.Pending.Waiting;
        GC.KeepAlive(engine);
        Console.WriteLine($"{waiting:N0} predictions waiting, {engine.Pending.Count:N0} held, {(double)features / waiting:N1} features each (bias included); managed heap grew {(after - before) / 1e6:N1} MB, plus {storeFixed / 1e6:N1} MB of the store's table of locations");
        Console.WriteLine($"bytes per waiting prediction: {(double)(after - before + storeFixed) / waiting:N1} (of which the table {(double)storeFixed / waiting:N1}, the id key {(double)idBytes / waiting:N1}); target <= 100");
        Console.WriteLine($"beside it, not counted: the memory of ids with inline labels reserves {(double)idsFixed / events:N1} bytes a place ({idsFixed / 1e6:N1} MB for {events:N0})");
        return 0;
    }
}
