using System.Globalization;
using System.Text.RegularExpressions;
using Driftline.Demo;

namespace Driftline.Benchmarks;

/// <summary>
/// What a multiclass replay costs per event against a binary one: the demo stream twice, with
/// the same events and features, once with its 0/1 labels and once with each label turned into
/// one of K = 4 classes (1 → late; 0 → on-time, failed or cancelled by the order number), replayed
/// alternately by the same executable. Reports the pipeline's time per event for each and their
/// ratio; the target is at most K/2 = 2.
/// </summary>
internal static partial class ClassesBenchmark
{
    private static readonly string[] Classes = ["on-time", "late", "failed", "cancelled"];

    public static int Run(string[] args)
    {
        int events = ReplayBenchmark.Option(args, "--events", 300_000);
        int repeats = ReplayBenchmark.Option(args, "--repeats", 3);
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench");
        Directory.CreateDirectory(dir);
        string binary = Path.Combine(dir, $"demo-{events}.jsonl");
        if (!File.Exists(binary))
        {
            using var output = File.Create(binary);
            new DemoScenario(7) { Orders = events }.Write(output);
        }
        string multi = Path.Combine(dir, $"demo-{events}-classes.jsonl");
        if (!File.Exists(multi))
        {
            File.WriteAllLines(multi, File.ReadLines(binary).Select(Relabel));
        }
        string config = Path.Combine(dir, "classes.json");
        string names = string.Join(",", Classes.Select(c => $"\"{c}\""));
        File.WriteAllText(config, "{\"Model\":{\"Classes\":[" + names + "]}}");
        string exe = Path.Combine(AppContext.BaseDirectory, "driftline");
        if (!File.Exists(exe))
        {
            Console.Error.WriteLine($"driftline executable not found next to the benchmark at {exe}");
            return 1;
        }
        Console.WriteLine($"{events:N0} events, binary {binary}, K = {Classes.Length} {multi}");
        var binaryCost = new List<double>();
        var multiCost = new List<double>();
        for (int i = 0; i < repeats; i++)
        {
            double? b = Pipeline(exe, ["replay", binary, "--out", Path.Combine(dir, "out-binary")]);
            double? m = Pipeline(exe, ["replay", multi, "--out", Path.Combine(dir, "out-classes"), "--config", config]);
            if (b is null || m is null)
            {
                return 1;
            }
            binaryCost.Add(b.Value / events * 1e6);
            multiCost.Add(m.Value / events * 1e6);
            Console.WriteLine($"run {i + 1}: binary {binaryCost[^1]:0.00} µs/event, K = 4 {multiCost[^1]:0.00} µs/event");
        }
        double rb = ReplayBenchmark.Median(binaryCost), rm = ReplayBenchmark.Median(multiCost);
        Console.WriteLine($"median: binary {rb:0.00} µs/event, K = 4 {rm:0.00} µs/event; ratio {rm / rb:0.00} (target <= {Classes.Length / 2.0:0.#})");
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
        string name = m.Groups[1].Value == "1" ? Classes[1] : n % 7 == 0 ? Classes[2] : n % 7 == 1 ? Classes[3] : Classes[0];
        return $"\"label\":\"{name}\"";
    });

    [GeneratedRegex("\"label\":([01])(?![0-9.])")]
    private static partial Regex LabelField();

    [GeneratedRegex("\"id\":\"o-([0-9]+)\"")]
    private static partial Regex OrderNumber();

    [GeneratedRegex(@"lines in ([0-9.]+) s")]
    private static partial Regex Reported();
}
