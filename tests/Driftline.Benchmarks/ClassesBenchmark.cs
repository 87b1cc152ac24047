using System.Globalization;
using System.Text.RegularExpressions;
using Driftline.Demo;

namespace Driftline.Benchmarks;

/// <summary>
/// What a multiclass replay costs per event against a binary one: the demo stream twice, with
/// the same events and features, once with its 0/1 labels and once with each label turned into
/// one of K classes (default 4: 1 → late; 0 → on-time, failed or cancelled by the order number;
/// with <c>--classes K</c> the 0 labels spread over K − 1 classes), replayed alternately by the
/// same executable. Reports the pipeline's time per event for each and their ratio; the target
/// at K = 4 is at most K/2 = 2. With <c>--recalibrate</c> a third replay of the K-class stream
/// runs with <c>Recalibration:Mode</c> Always (vector scaling, 2K parameters fitted on every
/// label), and its cost is reported against the K-class replay without it.
/// </summary>
internal static partial class ClassesBenchmark
{
    private static string[] Classes = ["on-time", "late", "failed", "cancelled"];

    public static int Run(string[] args)
    {
        int events = ReplayBenchmark.Option(args, "--events", 300_000);
        int repeats = ReplayBenchmark.Option(args, "--repeats", 3);
        int k = ReplayBenchmark.Option(args, "--classes", 4);
        bool recalibrate = args.Contains("--recalibrate");
        if (k < 2)
        {
            Console.Error.WriteLine("--classes must be at least 2");
            return 2;
        }
        if (k != 4)
        {
            Classes = ["on-time", "late", .. Enumerable.Range(3, k - 2).Select(i => $"outcome-{i}")];
        }
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench");
        Directory.CreateDirectory(dir);
        string binary = Path.Combine(dir, $"demo-{events}.jsonl");
        if (!File.Exists(binary))
        {
            using var output = File.Create(binary);
            new DemoScenario(7) { Orders = events }.Write(output);
        }
        string multi = Path.Combine(dir, k == 4 ? $"demo-{events}-classes.jsonl" : $"demo-{events}-classes{k}.jsonl");
        if (!File.Exists(multi))
        {
            File.WriteAllLines(multi, File.ReadLines(binary).Select(Relabel));
        }
        string config = Path.Combine(dir, $"classes{k}.json");
        string names = string.Join(",", Classes.Select(c => $"\"{c}\""));
        File.WriteAllText(config, "{\"Model\":{\"Classes\":[" + names + "]}}");
        string recalibrated = Path.Combine(dir, $"classes{k}-recalibrated.json");
        File.WriteAllText(recalibrated, "{\"Model\":{\"Classes\":[" + names + "]},\"Recalibration\":{\"Mode\":\"Always\"}}");
        string exe = Path.Combine(AppContext.BaseDirectory, "driftline");
        if (!File.Exists(exe))
        {
            Console.Error.WriteLine($"driftline executable not found next to the benchmark at {exe}");
            return 1;
        }
        Console.WriteLine($"{events:N0} events, binary {binary}, K = {Classes.Length} {multi}");
        var binaryCost = new List<double>();
        var multiCost = new List<double>();
        var recalibratedCost = new List<double>();
        for (int i = 0; i < repeats; i++)
        {
            double? b = Pipeline(exe, ["replay", binary, "--out", Path.Combine(dir, "out-binary")]);
            double? m = Pipeline(exe, ["replay", multi, "--out", Path.Combine(dir, "out-classes"), "--config", config]);
            double? r = recalibrate ? Pipeline(exe, ["replay", multi, "--out", Path.Combine(dir, "out-classes-recalibrated"), "--config", recalibrated]) : 0;
            if (b is null || m is null || r is null)
            {
                return 1;
            }
            binaryCost.Add(b.Value / events * 1e6);
            multiCost.Add(m.Value / events * 1e6);
            recalibratedCost.Add(r.Value / events * 1e6);
            Console.WriteLine($"run {i + 1}: binary {binaryCost[^1]:0.00} µs/event, K = {k} {multiCost[^1]:0.00} µs/event"
                + (recalibrate ? $", K = {k} recalibrated {recalibratedCost[^1]:0.00} µs/event (x{recalibratedCost[^1] / multiCost[^1]:0.00})" : ""));
        }
        double rb = ReplayBenchmark.Median(binaryCost), rm = ReplayBenchmark.Median(multiCost);
        Console.WriteLine($"median: binary {rb:0.00} µs/event, K = {k} {rm:0.00} µs/event; ratio {rm / rb:0.00}" + (k == 4 ? $" (target <= {k / 2.0:0.#})" : ""));
        if (recalibrate)
        {
            double rr = ReplayBenchmark.Median(recalibratedCost);
            Console.WriteLine($"median: K = {k} recalibrated {rr:0.00} µs/event; against K = {k} without {rr / rm:0.00}");
        }
        return 0;
    }

    // The pipeline's own time, as the replay reports it (start-up and end-of-run files left out).
    private static double? Pipeline(string exe, string[] arguments)
    {
        var (seconds, output) = ReplayBenchmark.TimeProcess(exe, arguments);
        var reported = Reported().Match(output);
        return seconds is null ? null : reported.Success ? double.Parse(reported.Groups[1].Value, CultureInfo.InvariantCulture) : seconds;
    }

    private static string Relabel(string line) => LabelField().Replace(line, m =>
    {
        var id = OrderNumber().Match(line);
        int n = id.Success ? int.Parse(id.Groups[1].Value, CultureInfo.InvariantCulture) : 0;
        // K = 4 as first measured; otherwise a 0 label goes to on-time half the time and to
        // one of the K − 2 other classes by the order number the rest.
        string name = m.Groups[1].Value == "1" ? Classes[1]
            : Classes.Length == 4 ? (n % 7 == 0 ? Classes[2] : n % 7 == 1 ? Classes[3] : Classes[0])
            : Classes.Length == 2 || n % 2 == 0 ? Classes[0] : Classes[2 + (n / 2) % (Classes.Length - 2)];
        return $"\"label\":\"{name}\"";
    });

    [GeneratedRegex("\"label\":([01])(?![0-9.])")]
    private static partial Regex LabelField();

    [GeneratedRegex("\"id\":\"o-([0-9]+)\"")]
    private static partial Regex OrderNumber();

    [GeneratedRegex(@"lines in ([0-9.]+) s")]
    private static partial Regex Reported();
}
