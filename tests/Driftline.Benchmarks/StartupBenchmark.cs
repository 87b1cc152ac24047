using System.Diagnostics;
using System.Globalization;

namespace Driftline.Benchmarks;

/// <summary>
/// Wall time of a whole 20-line <c>driftline replay</c> (every output, the HTML report with its
/// charts included), a fixed cost almost entirely: start-up, loading, compiling and the first
/// report render. Each round also times two baselines in the same minute, since the machine is
/// shared: <c>/bin/true</c> (process creation alone) and this benchmark's own executable with
/// <c>noop</c>, a .NET program that returns at once (runtime start-up of a framework-dependent,
/// ahead-of-time compiled app, as this one is published). Processor time (user + system, all
/// threads) is printed beside wall time: on a loaded machine it moves far less.
/// </summary>
internal static class StartupBenchmark
{
    private const int Lines = 20;

    internal static int Run(string[] args)
    {
        int repeats = ReplayBenchmark.Option(args, "--repeats", 5);
        bool phases = args.Contains("--phases");
        // Several --app folders: each round runs every one in turn, so builds compare in the same minutes.
        var apps = args.Select((a, i) => (a, i)).Where(x => x.a == "--app" && x.i + 1 < args.Length).Select(x => args[x.i + 1]).ToList();
        if (apps.Count == 0)
        {
            apps.Add(AppContext.BaseDirectory);
        }
        var executables = apps.Select(a => Path.Combine(a, "driftline")).ToList();
        if (executables.FirstOrDefault(e => !File.Exists(e)) is { } missing)
        {
            Console.Error.WriteLine($"driftline executable not found at {missing} (publish it, or pass --app DIR)");
            return 2;
        }
        string self = Environment.ProcessPath!;
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench", "startup");
        Directory.CreateDirectory(dir);
        string input = MakeInput(executables[0], dir);
        string outDir = Path.Combine(dir, "out");

        Console.WriteLine($"{Lines}-line replay of {input}; {repeats} rounds, each: /bin/true, hello-world .NET process, then the replay of each of: {string.Join(", ", apps)}{(phases ? $" (with {PhaseVariable}=1)" : "")}");
        var replay = apps.Select(_ => new List<double>()).ToList();
        var replayCpu = apps.Select(_ => new List<double>()).ToList();
        var phaseTimes = apps.Select(_ => new Dictionary<string, List<double>>()).ToList();
        var hello = new List<double>();
        var bare = new List<double>();
        var helloCpu = new List<double>();
        for (int round = 0; round < repeats; round++)
        {
            bare.Add(Milliseconds("/bin/true", []).Wall);
            (double wall, double cpu, _) = Milliseconds(self, ["noop"]);
            hello.Add(wall);
            helloCpu.Add(cpu);
            var line = new System.Text.StringBuilder(FormattableString.Invariant($"round {round + 1}: hello-world {hello[^1]:0} ms (cpu {helloCpu[^1]:0}), /bin/true {bare[^1]:0.0} ms"));
            for (int a = 0; a < apps.Count; a++)
            {
                if (Directory.Exists(outDir))
                {
                    Directory.Delete(outDir, recursive: true);
                }
                var run = Milliseconds(executables[a], ["replay", input, "--out", outDir], phases);
                replay[a].Add(run.Wall);
                replayCpu[a].Add(run.Cpu);
                if (!File.Exists(Path.Combine(outDir, "report.html")))
                {
                    Console.Error.WriteLine($"the replay of {apps[a]} wrote no report.html");
                    return 1;
                }
                foreach (var (name, ms) in run.Phases)
                {
                    phaseTimes[a].TryAdd(name, []);
                    phaseTimes[a][name].Add(ms);
                }
                line.Append(FormattableString.Invariant($"; replay {(apps.Count > 1 ? $"[{a + 1}] " : "")}{run.Wall:0} ms (cpu {run.Cpu:0}), / hello-world {run.Wall / hello[^1]:0.00}"));
            }
            Console.WriteLine(line);
        }
        Console.WriteLine(FormattableString.Invariant($"wall ms, min / median / max: hello-world {Spread(hello)}; /bin/true {Spread(bare)}"));
        Console.WriteLine(FormattableString.Invariant($"processor ms, min / median / max: hello-world {Spread(helloCpu)}"));
        for (int a = 0; a < apps.Count; a++)
        {
            var ratio = replay[a].Zip(hello, (r, h) => r / h).ToList();
            Console.WriteLine(FormattableString.Invariant(
                $"[{a + 1}] {apps[a]}: replay wall {Spread(replay[a])} ms, processor {Spread(replayCpu[a])} ms; replay / hello-world (same round) {ratio.Min():0.00} / {ReplayBenchmark.Median(ratio):0.00} / {ratio.Max():0.00}"));
            foreach (var (name, times) in phaseTimes[a])
            {
                Console.WriteLine(FormattableString.Invariant($"    phase {name,-16} {Spread(times)} ms"));
            }
        }
        return 0;
    }

    // Driftline's own phase marks (src/Driftline/Cli/PhaseMarks.cs).
    private const string PhaseVariable = "DRIFTLINE_PHASES";

    // The first lines of the demo stream, made by the driftline under test (so its own format).
    private static string MakeInput(string driftline, string dir)
    {
        string full = Path.Combine(dir, "demo-100.jsonl");
        if (double.IsNaN(Milliseconds(driftline, ["demo", "--out", full, "--orders", "100"]).Wall))
        {
            throw new InvalidOperationException("driftline demo failed");
        }
        string input = Path.Combine(dir, $"demo-{Lines}-lines.jsonl");
        File.WriteAllLines(input, File.ReadLines(full).Take(Lines));
        return input;
    }

    private static string Spread(List<double> values) =>
        FormattableString.Invariant($"{values.Min():0} / {ReplayBenchmark.Median(values):0} / {values.Max():0}");

    // Wall and processor time (user + system of the child, all its threads) in milliseconds; NaN when it failed.
    // With phases, each phase the child marked, as the milliseconds since the end of the
    // previous one ("main" counts from this process starting the child, so it is the runtime's
    // start-up; "process-end" from the child's last mark to its exit being seen here).
    private static (double Wall, double Cpu, List<(string Name, double Ms)> Phases) Milliseconds(string exe, string[] arguments, bool phases = false)
    {
        var info = new ProcessStartInfo(exe) { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (string a in arguments)
        {
            info.ArgumentList.Add(a);
        }
        if (phases)
        {
            info.Environment[PhaseVariable] = "1";
        }
        double cpuBefore = ReplayBenchmark.ChildrenCpuSeconds();
        double startedAt = (DateTime.UtcNow - DateTime.UnixEpoch).TotalMilliseconds;
        var clock = Stopwatch.StartNew();
        using var process = Process.Start(info)!;
        var stderr = process.StandardError.ReadToEndAsync();
        process.StandardOutput.ReadToEnd();
        process.WaitForExit();
        double ms = clock.Elapsed.TotalMilliseconds;
        if (process.ExitCode != 0)
        {
            Console.Error.WriteLine($"{Path.GetFileName(exe)} {string.Join(' ', arguments)} exited with {process.ExitCode}: {stderr.Result}");
            return (double.NaN, double.NaN, []);
        }
        var marks = new List<(string Name, double Ms)>();
        double previous = startedAt;
        foreach (string line in stderr.Result.Split('\n'))
        {
            string[] parts = line.Trim().Split(' ');
            if (parts.Length == 3 && parts[0] == "phase" && double.TryParse(parts[2], NumberStyles.Float, CultureInfo.InvariantCulture, out double at))
            {
                marks.Add((parts[1], at - previous));
                previous = at;
            }
        }
        if (marks.Count > 0)
        {
            marks.Add(("process-end", startedAt + ms - previous));
        }
        return (ms, (ReplayBenchmark.ChildrenCpuSeconds() - cpuBefore) * 1000, marks);
    }
}
