using System.Diagnostics;
using System.Globalization;
using Driftline.Demo;

namespace Driftline.Benchmarks;

/// <summary>
/// Whole-process replay benchmark: generates the demo stream at the requested size, then
/// alternates runs of the bare loop and of <c>driftline replay</c> over the same file, and
/// reports events per second and the replay's median as a ratio to the bare loop's. The bare
/// loop runs twice per round: in this process (warm, no start-up) and as a child process like
/// the replay (start-up and JIT included), so both ratios are on the table. Alternating keeps
/// every run exposed to the same background load on a shared machine.
/// </summary>
internal static class ReplayBenchmark
{
    public static int Run(string[] args)
    {
        int events = Option(args, "--events", 1_000_000);
        int repeats = Option(args, "--repeats", 3);
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench");
        Directory.CreateDirectory(dir);
        string file = Path.Combine(dir, $"demo-{events}.jsonl");
        if (!File.Exists(file))
        {
            using var output = File.Create(file);
            new DemoScenario(7) { Orders = events }.Write(output);
        }
        string exe = Path.Combine(AppContext.BaseDirectory, "driftline");
        if (!File.Exists(exe))
        {
            Console.Error.WriteLine($"driftline executable not found next to the benchmark at {exe}");
            return 1;
        }
        Console.WriteLine($"file: {file} ({new FileInfo(file).Length / 1e6:0.0} MB, {events:N0} events)");
        Console.WriteLine($"driftline in {AppContext.BaseDirectory}, compiled ahead of time (ReadyToRun): {(IsReadyToRun(Path.Combine(AppContext.BaseDirectory, "driftline.dll")) ? "yes" : "no, publish with -r to time it as it ships")}");

        BareLoop.Run(file); // warm the file cache and the JIT for the baseline
        var bare = new List<double>();
        var bareProcess = new List<double>();
        var replay = new List<double>();
        string self = Path.Combine(AppContext.BaseDirectory, "Driftline.Benchmarks");
        for (int i = 0; i < repeats; i++)
        {
            var clock = Stopwatch.StartNew();
            long scored = BareLoop.Run(file);
            bare.Add(scored / clock.Elapsed.TotalSeconds);

            var (seconds, _) = TimeProcess(self, ["bare", file]);
            if (seconds is null)
            {
                return 1;
            }
            bareProcess.Add(events / seconds.Value);

            (seconds, string output) = TimeProcess(exe, ["replay", file, "--out", Path.Combine(dir, "out")]);
            if (seconds is null)
            {
                return 1;
            }
            replay.Add(events / seconds.Value);
            // The replay reports its pipeline's time; the rest is start-up and the files written after.
            var reported = System.Text.RegularExpressions.Regex.Match(output, @"lines in ([0-9.]+) s");
            string split = reported.Success ? $" (pipeline {reported.Groups[1].Value} s of {seconds.Value:0.00} s)" : "";
            Console.WriteLine($"run {i + 1}: bare loop {bare[^1]:N0} events/s in process, {bareProcess[^1]:N0} as a process; replay (whole process) {replay[^1]:N0} events/s{split}");
        }
        double b = Median(bare), bp = Median(bareProcess), r = Median(replay);
        Console.WriteLine($"median: bare loop {b:N0} events/s in process, {bp:N0} as a process; replay {r:N0} events/s");
        Console.WriteLine($"ratio replay/bare: {r / bp:0.00} against the bare process, {r / b:0.00} against the warm in-process loop (target >= 0.5)");
        return 0;
    }

    // A ReadyToRun image carries a managed native header beside its IL.
    private static bool IsReadyToRun(string assembly)
    {
        using var pe = new System.Reflection.PortableExecutable.PEReader(File.OpenRead(assembly));
        return pe.PEHeaders.CorHeader?.ManagedNativeHeaderDirectory.Size > 0;
    }

    internal static (double? Seconds, string Output) TimeProcess(string exe, string[] arguments)
    {
        var clock = Stopwatch.StartNew();
        using var process = Process.Start(new ProcessStartInfo(exe, arguments) { RedirectStandardOutput = true })!;
        string output = process.StandardOutput.ReadToEnd();
        process.WaitForExit();
        if (process.ExitCode != 0)
        {
            Console.Error.WriteLine($"{Path.GetFileName(exe)} {arguments[0]} exited with {process.ExitCode}");
            return (null, output);
        }
        return (clock.Elapsed.TotalSeconds, output);
    }

    internal static double Median(List<double> values)
    {
        var sorted = values.Order().ToArray();
        return sorted.Length % 2 == 1 ? sorted[sorted.Length / 2] : (sorted[sorted.Length / 2 - 1] + sorted[sorted.Length / 2]) / 2;
    }

    internal static int Option(string[] args, string name, int fallback)
    {
        int i = Array.IndexOf(args, name);
        return i >= 0 && i + 1 < args.Length ? int.Parse(args[i + 1], CultureInfo.InvariantCulture) : fallback;
    }
}
