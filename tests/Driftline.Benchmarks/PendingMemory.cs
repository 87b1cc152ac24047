using System.Text;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;

namespace Driftline.Benchmarks;

/// <summary>
/// Bytes a waiting prediction costs: fills the pending store of one engine with the first
/// <c>N</c> events of the wide stream (eleven hashed features each, the inline label removed so
/// every event waits), and reads <see cref="GC.GetTotalMemory(bool)"/> after a full collection
/// before and after. The difference over the predictions waiting is the cost of one, its id
/// string included (the store keeps it; the line it came from is gone).
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
        string file = Path.Combine(dir, $"wide-{events}.jsonl");
        if (!File.Exists(file))
        {
            new WideStream(7).Write(file + ".part", events);
            File.Move(file + ".part", file, overwrite: true);
        }
        var options = new DriftlineOptions();
        options.Labels.MaxPending = events;
        var engine = new ScoringEngine(options, new NullSink());
        var parser = new EventParser();
        var record = new ParsedRecord();
        long before = GC.GetTotalMemory(forceFullCollection: true);
        long idBytes = 0;
        foreach (string line in File.ReadLines(file))
        {
            if (parser.TryParse(Encoding.UTF8.GetBytes(line), record, out _))
            {
                record.Label = -1;
                engine.Process(record);
                // A string is a 20-byte header and length plus two bytes a character, rounded to 8.
                idBytes += (20 + (2 * record.Id!.Length) + 2 + 7) / 8 * 8;
            }
        }
        long after = GC.GetTotalMemory(forceFullCollection: true);
        int waiting = engine.Pending.Waiting;
        GC.KeepAlive(engine);
        Console.WriteLine($"{waiting:N0} predictions waiting, {engine.Pending.Count:N0} held; managed heap grew {(after - before) / 1e6:N1} MB");
        Console.WriteLine($"bytes per waiting prediction: {(double)(after - before) / waiting:N0} (of which the id string {(double)idBytes / waiting:N0}); target <= 100");
        return 0;
    }
}
