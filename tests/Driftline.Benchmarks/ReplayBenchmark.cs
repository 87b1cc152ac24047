using System.Diagnostics;
using System.Globalization;
using System.Runtime.InteropServices;
using Driftline.Demo;

namespace Driftline.Benchmarks;

/// <summary>
/// Whole-process replay benchmark: generates the chosen stream at the requested size, then
/// alternates runs of the bare loop and of <c>driftline replay</c> over the same file, and
/// reports events per second and, for every run, the replay's rate as a ratio to the bare
/// process of the same run (min, median and max of those ratios). The bare loop runs twice per
/// round: in this process (warm, no start-up) and as a child process like the replay (start-up
/// and JIT included), so both ratios are on the table. Alternating keeps every run exposed to
/// the same background load on a shared machine. Each child's processor time (user + system,
/// all its threads) is read from <c>getrusage(RUSAGE_CHILDREN)</c>, so the replay's extra
/// processor work over the bare loop is measured as well as its wall time.
/// </summary>
internal static class ReplayBenchmark
{
    public static int Run(string[] args)
    {
        int events = Option(args, "--events", 1_000_000);
        int repeats = Option(args, "--repeats", 3);
        int i0 = Array.IndexOf(args, "--workload");
        string workload = i0 >= 0 && i0 + 1 < args.Length ? args[i0 + 1] : "demo";
        if (workload is not ("demo" or "wide"))
        {
            Console.Error.WriteLine($"--workload {workload}: expected demo (the demo stream, late labels) or wide (WideStream: 11 features, labels inline)");
            return 2;
        }
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench");
        Directory.CreateDirectory(dir);
        string file = Path.Combine(dir, $"{workload}-{events}.jsonl");
        if (!File.Exists(file))
        {
            // Written to a temporary name and renamed, so an interrupted run leaves no half file.
            string part = file + ".part";
            if (workload == "wide")
            {
                new WideStream(7).Write(part, events);
            }
            else
            {
                using var output = File.Create(part);
                new DemoScenario(7) { Orders = events }.Write(output);
            }
            File.Move(part, file, overwrite: true);
        }
        string exe = Path.Combine(AppContext.BaseDirectory, "driftline");
        if (!File.Exists(exe))
        {
            Console.Error.WriteLine($"driftline executable not found next to the benchmark at {exe}");
            return 1;
        }
        Console.WriteLine($"workload {workload}, file: {file} ({new FileInfo(file).Length / 1e6:0.0} MB, {events:N0} events)");
        Console.WriteLine($"driftline in {AppContext.BaseDirectory}, compiled ahead of time (ReadyToRun): {(IsReadyToRun(Path.Combine(AppContext.BaseDirectory, "driftline.dll")) ? "yes" : "no, publish with -r to time it as it ships")}");

        BareLoop.Run(file); // warm the file cache and the JIT for the baseline
        var bare = new List<double>();
        var bareProcess = new List<double>();
        var replay = new List<double>();
        var ratios = new List<double>();
        var cpuRatios = new List<double>();
        string self = Path.Combine(AppContext.BaseDirectory, "Driftline.Benchmarks");
        for (int i = 0; i < repeats; i++)
        {
            var clock = Stopwatch.StartNew();
            long scored = BareLoop.Run(file);
            bare.Add(scored / clock.Elapsed.TotalSeconds);

            var bareRun = TimeChild(self, ["bare", file]);
            if (bareRun is null)
            {
                return 1;
            }
            bareProcess.Add(events / bareRun.Value.Seconds);

            var replayRun = TimeChild(exe, ["replay", file, "--out", Path.Combine(dir, "out")]);
            if (replayRun is null)
            {
                return 1;
            }
            replay.Add(events / replayRun.Value.Seconds);
            ratios.Add(replay[^1] / bareProcess[^1]);
            cpuRatios.Add(replayRun.Value.Cpu / bareRun.Value.Cpu);
            // The replay reports its pipeline's time; the rest is start-up and the files written after.
            var reported = System.Text.RegularExpressions.Regex.Match(replayRun.Value.Output, @"lines in ([0-9.]+) s");
            string split = reported.Success ? $" (pipeline {reported.Groups[1].Value} s of {replayRun.Value.Seconds:0.00} s)" : "";
            Console.WriteLine($"run {i + 1}: bare loop {bare[^1]:N0} events/s in process, {bareProcess[^1]:N0} as a process ({bareRun.Value.Seconds:0.00} s, cpu {bareRun.Value.Cpu:0.00} s); "
                + $"replay (whole process) {replay[^1]:N0} events/s{split}, cpu {replayRun.Value.Cpu:0.00} s; ratio {ratios[^1]:0.00}, cpu ratio {cpuRatios[^1]:0.00}");
        }
        double b = Median(bare), bp = Median(bareProcess), r = Median(replay);
        Console.WriteLine($"median: bare loop {b:N0} events/s in process, {bp:N0} as a process; replay {r:N0} events/s");
        Console.WriteLine($"ratio replay/bare process, per run: min {ratios.Min():0.00}, median {Median(ratios):0.00}, max {ratios.Max():0.00} (runs: {string.Join(", ", ratios.Select(x => x.ToString("0.00", CultureInfo.InvariantCulture)))}); target >= 0.8, every run >= 0.65");
        Console.WriteLine($"processor time replay/bare process, per run: median {Median(cpuRatios):0.00} (runs: {string.Join(", ", cpuRatios.Select(x => x.ToString("0.00", CultureInfo.InvariantCulture)))})");
        Console.WriteLine($"ratio of medians against the warm in-process loop: {r / b:0.00}");
        return 0;
    }

    // A ReadyToRun image carries a managed native header beside its IL.
    private static bool IsReadyToRun(string assembly)
    {
        using var pe = new System.Reflection.PortableExecutable.PEReader(File.OpenRead(assembly));
        return pe.PEHeaders.CorHeader?.ManagedNativeHeaderDirectory.Size > 0;
    }

    /// <summary>Runs a child process to its end; its wall time in seconds, or null when it failed.</summary>
    internal static (double? Seconds, string Output) TimeProcess(string exe, string[] arguments) =>
        TimeChild(exe, arguments) is { } run ? (run.Seconds, run.Output) : (null, "");

    private static (double Seconds, double Cpu, string Output)? TimeChild(string exe, string[] arguments)
    {
        double cpuBefore = ChildrenCpuSeconds();
        var clock = Stopwatch.StartNew();
        using var process = Process.Start(new ProcessStartInfo(exe, arguments) { RedirectStandardOutput = true })!;
        string output = process.StandardOutput.ReadToEnd();
        process.WaitForExit();
        double seconds = clock.Elapsed.TotalSeconds;
        if (process.ExitCode != 0)
        {
            Console.Error.WriteLine($"{Path.GetFileName(exe)} {arguments[0]} exited with {process.ExitCode}");
            return null;
        }
        return (seconds, ChildrenCpuSeconds() - cpuBefore, output);
    }

    // getrusage(RUSAGE_CHILDREN): user + system time of every child waited for so far (Linux
    // x64 layout: two timevals of two longs each at the start of struct rusage).
    internal static double ChildrenCpuSeconds()
    {
        var usage = new long[18];
        if (!OperatingSystem.IsLinux() || GetRusage(-1, usage) != 0)
        {
            return double.NaN;
        }
        return usage[0] + usage[1] / 1e6 + usage[2] + usage[3] / 1e6;
    }

    [DllImport("libc", EntryPoint = "getrusage")]
    private static extern int GetRusage(int who, [Out] long[] usage);

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
