using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Snapshots;
using Driftline.Pipeline;
using Driftline.Report;

namespace Driftline.Cli;

/// <summary>
/// Pays the one-time costs of the files a replay writes at its end, on a pool thread while the
/// replay runs: the chart library's set-up (fonts, native library, code not compiled ahead of
/// time) and the snapshot serializer's type metadata. Cold, these were most of the time between
/// the last event and the exit (a one-line replay took 0.7 s, of which a warm render and write
/// need a tenth).
/// </summary>
internal static class OutputWarmUp
{
    /// <summary>
    /// Inputs shorter than this (16 MB, about 60,000 events) skip the warm-up: their run is
    /// over before it would be, so it would only add its cost.
    /// </summary>
    public const long MinInputBytes = 16L << 20;

    private static readonly byte[][] Records =
    [
        """{"id":"w-1","time":"2026-01-01T00:00:00Z","features":{"zone":"a","distance_km":1.5,"raining":true,"tags":["x"]}}"""u8.ToArray(),
        """{"id":"w-2","time":"2026-01-01T00:00:01Z","features":{"zone":"b","distance_km":2.5,"raining":false},"label":1}"""u8.ToArray(),
        """{"id":"w-1","time":"2026-01-01T00:00:02Z","label":0}"""u8.ToArray(),
    ];

    /// <summary>Starts the warm-up; <paramref name="model"/> false skips the snapshot (monitor mode writes none).</summary>
    public static Task Start(DriftlineOptions options, bool model) => Task.Run(() =>
    {
        ReportWriter.WarmUp();
        if (model)
        {
            WriteThrowawaySnapshot(options);
        }
    });

    private static void WriteThrowawaySnapshot(DriftlineOptions options)
    {
        var sink = new BatchSink { Current = new OutputBatch() };
        var engine = new ScoringEngine(options, sink);
        var parser = new EventParser();
        var record = new ParsedRecord();
        foreach (var line in Records)
        {
            if (parser.TryParse(line, record, out _))
            {
                engine.Process(record);
            }
        }
        var snapshot = engine.Snapshot();
        snapshot.FeatureNames = new Dictionary<string, string> { ["0"] = "warm-up" };
        SnapshotCodec.Write(snapshot, Stream.Null);
    }
}
