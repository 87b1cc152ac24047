using Driftline.Core.Alerts;
using Driftline.Core.Metrics;
using Driftline.Core.Scoring;

namespace Driftline.Report;

/// <summary>
/// A sink in front of the pipeline's own that samples what the report draws, after each
/// prediction with the engine's measures and position as they were then (on the scoring
/// thread, or on the grading stage when grading is deferred): the rolling measures every few events, and
/// the window's reliability bins around each alert (which cannot be rebuilt afterwards from
/// the output files).
/// </summary>
/// <remarks>
/// Memory is bounded whatever the run's length: when the series reaches
/// <see cref="MaxPoints"/> it keeps every other point and samples half as often. Bins are
/// copied only at samples and alerts, never per event.
/// </remarks>
internal sealed class ReportRecorder(IScoringSink inner, ReportData data, int sampleEvery = 100) : IScoringSink
{
    /// <summary>Most points kept in the series before it is thinned.</summary>
    public const int MaxPoints = 1_200;

    /// <summary>Most alert transitions kept with their windows (the report shows far fewer; this only bounds memory).</summary>
    public const int MaxAlerts = 10_000;

    /// <summary>Most segments listed in the report, furthest off first.</summary>
    public const int MaxSegmentRows = 50;

    private readonly Queue<BinsCapture> _recent = new();
    private readonly List<AlertCapture> _awaitingAfter = [];
    private ScoringEngine? _engine;
    private BinsCapture? _windowBefore;
    private int _every = Math.Max(1, sampleEvery);
    private int _sinceSample;
    private long _lastLabels = -1;

    /// <summary>The data being filled.</summary>
    public ReportData Data => data;

    /// <summary>Connects the recorder to the engine it listens to (the engine is built around the sink, so this comes after).</summary>
    public void Attach(ScoringEngine engine)
    {
        ArgumentNullException.ThrowIfNull(engine);
        _engine = engine;
        _rules = engine.Rules.ToArray();
        data.Rules.Clear();
        // In the engine's order (channel by channel), each rule named with the class it watches.
        data.Rules.AddRange(engine.Channels.SelectMany(c => c.Rules.Select(r => ReportRule.Of(r.Rule) is { } shown ? shown with { Class = c.ClassName } : null)));
    }

    private AlertRule[] _rules = [];
    private long _aucAt = long.MinValue / 2;
    private double _auc = double.NaN;

    /// <inheritdoc />
    public void OnPrediction(in Prediction prediction)
    {
        inner.OnPrediction(prediction);
    }

    /// <inheritdoc />
    public void OnScored()
    {
        inner.OnScored();
        if (++_sinceSample >= _every)
        {
            _sinceSample = 0;
            Sample();
        }
    }

    /// <inheritdoc />
    public void OnAlert(AlertTransition alert)
    {
        inner.OnAlert(alert);
        if (data.Alerts.Count >= MaxAlerts)
        {
            return;
        }
        var engine = Engine;
        data.Alerts.Add(new AlertCapture(alert, alert.Raised ? _windowBefore : null, Capture(engine)));
        if (alert.Raised)
        {
            _awaitingAfter.Add(data.Alerts[^1]);
        }
    }

    /// <inheritdoc />
    public void OnMetrics(in MetricsRow row) => inner.OnMetrics(row);

    /// <summary>Takes the final sample and the whole-run figures once the input is done.</summary>
    public void Finish()
    {
        var engine = Engine;
        _lastLabels = -1;
        Sample();
        foreach (var waiting in _awaitingAfter)
        {
            waiting.After = Capture(engine);
        }
        _awaitingAfter.Clear();
        // A multiclass model's reliability diagram is its top label's (confidence against accuracy).
        var reliability = engine.TopLabel ?? engine.Totals;
        var bins = new ReliabilityBin[reliability.Bins];
        reliability.CopyBins(bins);
        data.WholeRun = bins;
        data.Confusion = engine.Confusion;
        data.ClassBins.Clear();
        foreach (var channel in engine.Channels.Where(c => c.ClassName is not null))
        {
            var classBins = new ReliabilityBin[channel.Totals.Bins];
            channel.Totals.CopyBins(classBins);
            data.ClassBins.Add((channel.ClassName!, classBins));
        }
        data.Total = engine.Measures(total: true);
        data.PriorTotal = engine.PriorMeasures(total: true);
        data.ServedTotal = engine.ServedMeasures(total: true);
        data.Recalibrations.Clear();
        // One pair per model (binary), or per model and class (vector scaling).
        data.Recalibrations.AddRange(engine.Models.Where(m => m.Recalibration is not null).SelectMany(m => m.Recalibration!.Parameters.Select((x, k) =>
            (engine.ClassNames is { } names ? $"{m.Key}: {names[k]}" : m.Key, x.Intercept, x.Slope))));
        data.Counters = engine.Counters.Copy();
        data.ExpiredLabels = engine.Pending.Expired;
        data.WaitingLabels = engine.Pending.Waiting;
        data.OpenAlerts.AddRange(engine.Rules.Where(r => r.Raised).Select(r => r.Options.Name));
        data.Segments.Clear();
        if (engine.Segments is { } segments)
        {
            data.Segments.AddRange(segments.Worst(MaxSegmentRows));
        }
    }

    private ScoringEngine Engine => _engine ?? throw new InvalidOperationException("Attach the engine before the run");

    private void Sample()
    {
        var engine = Engine;
        var at = engine.Position;
        long labels = at.Labels;
        if (labels == _lastLabels || labels == 0)
        {
            return;
        }
        _lastLabels = labels;
        var window = engine.Measures(total: false);
        var prior = engine.PriorMeasures(total: false);
        var points = data.Points;
        var values = new double[_rules.Length];
        for (int r = 0; r < values.Length; r++)
        {
            values[r] = _rules[r].LastValue;
        }
        points.Add(new ReportPoint(labels, at.Events, window.Count, window.LogLoss, prior.LogLoss,
            window.CalibrationInTheLarge, window.Ece, at.LateLabels, at.Expired,
            window.Brier, WindowAuc(engine, labels), at.ClockTicks, values,
            engine.ClassNames is null ? null : engine.ClassMeasuresOf(total: false).Select(c => c.MeanP - c.ObservedRate).ToArray(),
            engine.ServedMeasures(total: false)?.CalibrationInTheLarge ?? double.NaN, engine.ServedMeasures(total: false)?.LogLoss ?? double.NaN));
        if (points.Count >= MaxPoints)
        {
            // Keep every other point, then sample half as often.
            int kept = 0;
            for (int i = 0; i < points.Count; i += 2)
            {
                points[kept++] = points[i];
            }
            points.RemoveRange(kept, points.Count - kept);
            _every *= 2;
        }

        // The window before an alert is the one ending where the alerting window starts:
        // the latest capture at least one window-length old.
        int size = engine.Window.Capacity;
        var capture = Capture(engine);
        _recent.Enqueue(capture);
        while (_recent.Count > 0 && _recent.Peek().Labels <= labels - size)
        {
            _windowBefore = _recent.Dequeue();
        }
        for (int i = _awaitingAfter.Count - 1; i >= 0; i--)
        {
            if (labels >= _awaitingAfter[i].At.Labels + size)
            {
                _awaitingAfter[i].After = capture;
                _awaitingAfter.RemoveAt(i);
            }
        }
    }

    // The report window's AUC, recomputed from its contents once a quarter-window of labels has
    // passed and held in between: a rolling AUC updated on every label cost 8.6% of the scoring
    // thread in the wide replay's profile, for a chart drawn from a thousand points.
    private double WindowAuc(ScoringEngine engine, long labels)
    {
        var window = engine.Window;
        if (labels - _aucAt >= Math.Max(1, window.Capacity / 4))
        {
            _aucAt = labels;
            // One sort of the window's contents, not a tree insert per prediction: the same value
            // to the bit (tests/Driftline.Benchmarks README, replay profile).
            _auc = RollingAuc.Of(window.ToArray());
        }
        return _auc;
    }

    private static BinsCapture Capture(ScoringEngine engine)
    {
        var window = engine.TopLabelWindow ?? engine.Window;
        var bins = new ReliabilityBin[window.Bins];
        window.CopyBins(bins);
        return new BinsCapture(engine.Position.Labels, window.Count, bins, engine.Confusion);
    }
}
