using System.Diagnostics;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Output;
using Driftline.Pipeline;
using Driftline.Report;
using Driftline.Core.Features;

namespace Driftline.Benchmarks;

/// <summary>
/// Where replay time goes: the bare loop, then parse + the whole score/learn step with a sink
/// that drops results, then the full in-process pipeline with outputs. Same file, same run.
/// </summary>
internal static class StageSplit
{
    private sealed class NullSink : IScoringSink
    {
        public void OnPrediction(in Prediction prediction) { }

        public void OnAlert(AlertTransition alert) { }

        public void OnMetrics(in MetricsRow row) { }
    }

    public static int Run(string file)
    {
        var lines = File.ReadAllLines(file).Select(System.Text.Encoding.UTF8.GetBytes).ToArray();
        for (int round = 0; round < 2; round++)
        {
            var clock = Stopwatch.StartNew();
            long n = BareLoop.Run(file);
            Report("bare loop (read, parse, update)", n, clock.Elapsed);

            clock.Restart();
            Report("parse + score/learn step (in memory, no outputs)", ScoreInMemory(lines), clock.Elapsed);

            clock.Restart();
            var pipeline = new ReplayPipeline(new DriftlineOptions());
            using (var outputs = new ReplayOutputs(Path.Combine(Path.GetTempPath(), "driftline-bench", "split")))
            using (var input = File.OpenRead(file))
            {
                pipeline.RunAsync(input, outputs, CancellationToken.None).GetAwaiter().GetResult();
            }
            Report("replay pipeline in process (with outputs)", pipeline.Engine.Counters.Events, clock.Elapsed);

            clock.Restart();
            ReportRecorder? recorder = null;
            var lane = new ReplayLane(new DriftlineOptions(), sink => recorder = new ReportRecorder(sink, new ReportData("split", new DriftlineOptions())));
            recorder!.Attach(lane.Engine);
            var full = new ReplayPipeline([lane]) { Names = new FeatureNames() };
            using (var outputs = new ReplayOutputs(Path.Combine(Path.GetTempPath(), "driftline-bench", "split")))
            using (var input = File.OpenRead(file))
            {
                full.RunAsync(input, outputs, CancellationToken.None).GetAwaiter().GetResult();
            }
            Report("... plus report recording and feature names", full.Engine.Counters.Events, clock.Elapsed);

            clock.Restart();
            var named = new ReplayPipeline(new DriftlineOptions()) { Names = new FeatureNames() };
            using (var outputs = new ReplayOutputs(Path.Combine(Path.GetTempPath(), "driftline-bench", "split")))
            using (var input = File.OpenRead(file))
            {
                named.RunAsync(input, outputs, CancellationToken.None).GetAwaiter().GetResult();
            }
            Report("... feature names only", named.Engine.Counters.Events, clock.Elapsed);
        }
        return 0;
    }

    /// <summary>Parse + score/learn only, in memory, three passes (for a profiler).</summary>
    public static int EngineOnly(string file)
    {
        var lines = File.ReadAllLines(file).Select(System.Text.Encoding.UTF8.GetBytes).ToArray();
        for (int round = 0; round < 3; round++)
        {
            // Processor time rather than wall time: this loop is one thread, and on a shared
            // machine its wall time mostly measures the neighbours.
            var cpu = Environment.CpuUsage.TotalTime;
            long events = ParseInMemory(lines);
            var parse = Environment.CpuUsage.TotalTime - cpu;
            Report("parse only (in memory), per processor second", events, parse);
            cpu = Environment.CpuUsage.TotalTime;
            events = ScoreInMemory(lines);
            var both = Environment.CpuUsage.TotalTime - cpu;
            Report("parse + step (in memory, no outputs), per processor second", events, both);
            Console.WriteLine($"{"step alone (the difference), processor ns per event",-52} {(both - parse).TotalMilliseconds * 1e6 / events,12:N0}");
        }
        return 0;
    }

    private static long ParseInMemory(byte[][] lines)
    {
        var parser = new EventParser();
        var record = new ParsedRecord();
        long events = 0;
        foreach (var line in lines)
        {
            if (parser.TryParse(line, record, out _) && record.Kind == RecordKind.Event)
            {
                events++;
            }
        }
        return events;
    }

    private static long ScoreInMemory(byte[][] lines)
    {
        var parser = new EventParser();
        var record = new ParsedRecord();
        var engine = new ScoringEngine(new DriftlineOptions(), new NullSink());
        foreach (var line in lines)
        {
            if (parser.TryParse(line, record, out _))
            {
                engine.Process(record);
            }
        }
        return engine.Counters.Events;
    }

    private static void Report(string what, long events, TimeSpan elapsed) =>
        Console.WriteLine($"{what,-52} {events / elapsed.TotalSeconds,12:N0} events/s");
}
