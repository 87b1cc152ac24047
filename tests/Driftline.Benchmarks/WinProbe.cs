using System.Diagnostics;
using Driftline.Core.Metrics;
namespace Driftline.Benchmarks;
internal static class WinProbe
{
    public static int Run()
    {
        var w = new CalibrationWindow(2000);
        var r = new Random(1);
        var ps = Enumerable.Range(0, 1_000_000).Select(_ => r.NextDouble()).ToArray();
        for (int round = 0; round < 2; round++)
        {
            var c = Stopwatch.StartNew();
            foreach (var p in ps) w.Add(p, p > 0.5 ? 1 : 0);
            Console.WriteLine($"add: {c.Elapsed.TotalMilliseconds * 1e6 / ps.Length:0} ns");
            c.Restart();
            double s = 0;
            for (int i = 0; i < ps.Length; i++) s += w.Current.Ece;
            Console.WriteLine($"snapshot: {c.Elapsed.TotalMilliseconds * 1e6 / ps.Length:0} ns {s > 0}");
        }
        return 0;
    }
}
