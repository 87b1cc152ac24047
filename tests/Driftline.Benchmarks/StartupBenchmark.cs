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
        int i = Array.IndexOf(args, "--app");
        string appDir = i >= 0 && i + 1 < args.Length ? args[i + 1] : AppContext.BaseDirectory;
        string driftline = Path.Combine(appDir, "driftline");
        if (!File.Exists(driftline))
        {
            Console.Error.WriteLine($"driftline executable not found at {driftline} (publish it, or pass --app DIR)");
            return 2;
        }
        string self = Environment.ProcessPath!;
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench", "startup");
        Directory.CreateDirectory(dir);
        string input = MakeInput(driftline, dir);
        string outDir = Path.Combine(dir, "out");

        Console.WriteLine($"driftline in {appDir}; {Lines}-line replay of {input}; {repeats} rounds, each: /bin/true, hello-world .NET process, replay");
        var replay = new List<double>();
        var hello = new List<double>();
        var bare = new List<double>();
        var replayCpu = new List<double>();
        var helloCpu = new List<double>();
        for (int round = 0; round < repeats; round++)
        {
            bare.Add(Milliseconds("/bin/true", []).Wall);
            (double wall, double cpu) = Milliseconds(self, ["noop"]);
            hello.Add(wall);
            helloCpu.Add(cpu);
            if (Directory.Exists(outDir))
            {
                Directory.Delete(outDir, recursive: true);
            }
            (wall, cpu) = Milliseconds(driftline, ["replay", input, "--out", outDir]);
            replay.Add(wall);
            replayCpu.Add(cpu);
            if (!File.Exists(Path.Combine(outDir, "report.html")))
            {
                Console.Error.WriteLine("the replay wrote no report.html");
                return 1;
            }
            Console.WriteLine(FormattableString.Invariant(
                $"round {round + 1}: replay {replay[^1]:0} ms (cpu {replayCpu[^1]:0}), hello-world {hello[^1]:0} ms (cpu {helloCpu[^1]:0}), /bin/true {bare[^1]:0.0} ms; replay - hello-world {replay[^1] - hello[^1]:0} ms, replay / hello-world {replay[^1] / hello[^1]:0.00}"));
        }
        var minusHello = replay.Zip(hello, (r, h) => r - h).ToList();
        Console.WriteLine(FormattableString.Invariant(
            $"wall ms, min / median / max: replay {Spread(replay)}; hello-world {Spread(hello)}; replay - hello-world {Spread(minusHello)}"));
        Console.WriteLine(FormattableString.Invariant(
            $"processor ms, min / median / max: replay {Spread(replayCpu)}; hello-world {Spread(helloCpu)}"));
        return 0;
    }

    // The first lines of the demo stream, made by the driftline under test (so its own format).
    private static string MakeInput(string driftline, string dir)
    {
        string full = Path.Combine(dir, "demo-100.jsonl");
        if (Milliseconds(driftline, ["demo", "--out", full, "--orders", "100"]).Wall is double.NaN)
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
    private static (double Wall, double Cpu) Milliseconds(string exe, string[] arguments)
    {
        var info = new ProcessStartInfo(exe) { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (string a in arguments)
        {
            info.ArgumentList.Add(a);
        }
        double cpuBefore = ReplayBenchmark.ChildrenCpuSeconds();
        var clock = Stopwatch.StartNew();
        using var process = Process.Start(info)!;
        var stderr = process.StandardError.ReadToEndAsync();
        process.StandardOutput.ReadToEnd();
        process.WaitForExit();
        double ms = clock.Elapsed.TotalMilliseconds;
        if (process.ExitCode != 0)
        {
            Console.Error.WriteLine($"{Path.GetFileName(exe)} {string.Join(' ', arguments)} exited with {process.ExitCode}: {stderr.Result}");
            return (double.NaN, double.NaN);
        }
        return (ms, (ReplayBenchmark.ChildrenCpuSeconds() - cpuBefore) * 1000);
    }
}
