using System.Text;
using BenchmarkDotNet.Attributes;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Pipeline;

namespace Driftline.Benchmarks;

/// <summary>
/// The per-event hot path, with allocations: parsing one demo event, and the score/learn step
/// on an already parsed event. The baseline is parsing, so the step reads as a ratio to it.
/// </summary>
[MemoryDiagnoser]
public class HotPathBenchmarks
{
    private static readonly byte[] Event = Encoding.UTF8.GetBytes(
        """{"id":"o-100002","time":"2026-03-02T10:00:02.0457072Z","features":{"zone":"old-town","courier":"c-108","distance_km":6.11,"items":2,"basket_value":2071,"tip_share":0.0165,"hour":"10","raining":false,"tags":["contactless"]},"label":0}""");

    private readonly EventParser _parser = new();
    private readonly ParsedRecord _record = new();
    private ScoringEngine _engine = null!;
    private BatchSink _sink = null!;
    private readonly Cli.ReplayProgress _progress = new(TextWriter.Null, terminal: true, totalBytes: 1L << 30);
    private OutputBatch _batch = null!;

    [GlobalSetup]
    public void Setup()
    {
        _sink = new BatchSink();
        _batch = new OutputBatch();
        _sink.Current = _batch;
        _engine = new ScoringEngine(new DriftlineOptions(), _sink);
        _parser.TryParse(Event, _record, out _);
        for (int i = 0; i < 10_000; i++)
        {
            StepLabelled();
        }
    }

    [Benchmark(Baseline = true)]
    public bool Parse() => _parser.TryParse(Event, _record, out _);

    [Benchmark]
    public int StepLabelled()
    {
        if (_batch.PredictionCount > 4000)
        {
            _batch.Clear();
        }
        return (int)_engine.Process(_record);
    }

    /// <summary>
    /// The progress bar's call, made once per batch of lines (not per event) after scoring it:
    /// a clock read and a comparison, and a redraw every 200 ms.
    /// </summary>
    [Benchmark]
    public void ProgressReport() => _progress.Report(1L << 20, 1_000, 900, 300, 1);
}
