using System.Diagnostics;
using System.Globalization;

namespace Driftline.Benchmarks;

/// <summary>
/// Peak working set of a whole <c>driftline replay</c> of the wide stream at several lengths,
/// to show it stays flat in stream length: each run is a fresh process under
/// <c>/usr/bin/time -f %M</c> (the kernel's maximum resident set of that process, in KB), three
/// runs each, lengths interleaved so a slow spell of the shared machine does not fall on one
/// length only.
/// </summary>
internal static class PeakMemory
{
    public static int Run(string[] args)
    {
        int repeats = ReplayBenchmark.Option(args, "--repeats", 3);
        int at = Array.IndexOf(args, "--driftline");
        // Another build's executable, for a before/after in the same session.
        string exe = at >= 0 && at + 1 < args.Length ? args[at + 1] : Path.Combine(AppContext.BaseDirectory, "driftline");
        int[] lengths = args.Where((a, i) => !a.StartsWith("--", StringComparison.Ordinal) && (i == 0 || !args[i - 1].StartsWith("--", StringComparison.Ordinal)))
            .Select(a => int.Parse(a, CultureInfo.InvariantCulture)).ToArray();
        if (lengths.Length == 0)
        {
            lengths = [500_000, 2_000_000, 5_000_000];
        }
        const string time = "/usr/bin/time";
        if (!File.Exists(exe) || !File.Exists(time))
        {
            Console.Error.WriteLine($"needs {exe} (publish the benchmark) and {time}");
            return 1;
        }
        string dir = Path.Combine(Path.GetTempPath(), "driftline-bench");
        Directory.CreateDirectory(dir);
        var peaks = lengths.ToDictionary(n => n, _ => new List<double>());
        foreach (int n in lengths)
        {
            string file = Path.Combine(dir, $"wide-{n}.jsonl");
            if (!File.Exists(file))
            {
                new WideStream(7).Write(file + ".part", n);
                File.Move(file + ".part", file, overwrite: true);
            }
        }
        for (int r = 0; r < repeats; r++)
        {
            foreach (int n in lengths)
            {
                var start = new ProcessStartInfo(time) { RedirectStandardError = true, RedirectStandardOutput = true };
                foreach (string a in new[] { "-f", "peak-kb %M", exe, "replay", Path.Combine(dir, $"wide-{n}.jsonl"), "--out", Path.Combine(dir, "peak-out") })
                {
                    start.ArgumentList.Add(a);
                }
                using var process = Process.Start(start)!;
                _ = process.StandardOutput.ReadToEndAsync();
                string err = process.StandardError.ReadToEnd();
                process.WaitForExit();
                var line = err.Split('\n').LastOrDefault(l => l.StartsWith("peak-kb ", StringComparison.Ordinal));
                if (process.ExitCode != 0 || line is null)
                {
                    Console.Error.WriteLine($"replay of {n:N0} events failed ({process.ExitCode}): {err}");
                    return 1;
                }
                double mb = long.Parse(line[8..].Trim(), CultureInfo.InvariantCulture) / 1024.0;
                peaks[n].Add(mb);
                Console.WriteLine($"run {r + 1}: {n:N0} events, peak working set {mb:N0} MB");
            }
        }
        foreach (int n in lengths)
        {
            Console.WriteLine($"{n:N0} events: peak working set median {ReplayBenchmark.Median(peaks[n]):N0} MB (runs {string.Join(", ", peaks[n].Select(x => x.ToString("N0", CultureInfo.InvariantCulture)))})");
        }
        return 0;
    }
}
