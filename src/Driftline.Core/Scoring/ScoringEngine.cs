using System.Diagnostics;
using System.Runtime.CompilerServices;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Features;
using Driftline.Core.Metrics;
using Driftline.Core.Options;
using Driftline.Core.Recalibration;
using Driftline.Core.Snapshots;

namespace Driftline.Core.Scoring;

/// <summary>
/// The score/learn step: one record in, its prediction, grading, learning and alerts out.
/// Single-threaded, no I/O, no clock (time comes with the events), no logging: the same
/// engine runs under the live worker, replay and the tests, and gives identical results for
/// identical input.
/// </summary>
/// <remarks>
/// <para>
/// The per-event methods here and in the windows, detectors, parser, featurizer and learner are
/// marked <see cref="MethodImplOptions.AggressiveOptimization"/>: compiled fully optimised on
/// first use instead of starting from ahead-of-time code (which cannot inline across assemblies
/// and ran the step about 2.4 times slower) and waiting to be recompiled. A replay of a million
/// events spent a large part of its run before that recompilation (tests/Driftline.Benchmarks).
/// </para>
/// <para>
/// Progressive validation: an event is always scored before its label is used, whether the
/// label comes with it or later. A late label grades the probability that was emitted, then
/// trains on the features stored with it, at the current weights.
/// </para>
/// </remarks>
internal sealed class ScoringEngine
{
    /// <summary>Key of the model used by events that name none.</summary>
    public const string DefaultKey = "default";

    private readonly DriftlineOptions _options;
    private readonly IScoringSink _sink;
    private readonly Dictionary<string, int> _modelIndex = new(StringComparer.Ordinal);
    private readonly List<KeyedModel> _models = [];
    private readonly SparseVector _x = new();
    private readonly SparseVector _lateX = new();
    // Channel 0 is the model as a whole (binary: the only one); with Model:Classes, channel
    // k + 1 is class k against the rest.
    private readonly GradingChannel[] _channels;
    private readonly SegmentTracker? _segments;
    private readonly BinEdges _edges;
    private readonly int _outputs;
    // The arrays the pending store and the inline-labelled ids are copied into at a snapshot, back from the checkpoint writer for the next one.
    private readonly RecordCopyPool _pendingCopies = new();
    private readonly RecordCopyPool _inlineCopies = new();
    private readonly double[] _p;
    private readonly double[] _priorP;
    private readonly double[] _served;
    private readonly long[]? _confusion;
    private long _clockTicks = ParsedRecord.NoTime;
    private readonly long _maxSkewTicks;
    private string? _lastKey;
    private int _lastModel;
    // With grading deferred: where the scoring thread leaves each batch's grading work.
    private GradingLog? _deferred;
    // While the grading stage works through a log: the position of the entry in hand.
    private EnginePosition? _replaying;

    /// <summary>Creates an engine with no models yet; options must have been validated.</summary>
    public ScoringEngine(DriftlineOptions options, IScoringSink sink)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(sink);
        Debug.Assert(options.Validate().Count == 0, "options are validated at start-up");
        _options = options;
        _sink = sink;
        Pending = new PendingLabelStore(options.Labels.MaxPending, options.Labels.MaxAge);
        _maxSkewTicks = options.Labels.MaxClockSkew.Ticks;
        InlineLabelled = new RecentIds(options.Labels.MaxPending);
        var rules = options.EffectiveAlerts;
        int bins = options.Monitor.Bins;
        _edges = new BinEdges(bins);
        if (options.Model.Classes is { Count: > 0 } classes)
        {
            // Whole-model rules watch the true class's probability; the others run per class.
            var perClass = rules.Where(r => !r.WatchesWholeModel).Select(r => r.PerClass(classes.Count)).ToList();
            _channels = [new GradingChannel(options, rules.Where(r => r.WatchesWholeModel).ToList(), null),
                .. classes.Select(c => new GradingChannel(options, perClass, c))];
            ClassNames = classes;
            TopLabel = new CalibrationTotals(bins);
            TopLabelWindow = new CalibrationWindow(options.Monitor.Window, bins);
            _confusion = new long[classes.Count * classes.Count];
        }
        else
        {
            _channels = [new GradingChannel(options, rules, null)];
        }
        _outputs = options.Model.IsMulticlass ? options.Model.ClassCount : 1;
        _p = new double[_outputs];
        _priorP = new double[_outputs];
        _served = new double[_outputs];
        _segments = options.Monitor.SegmentBy is null ? null : new SegmentTracker(options.Monitor.Window, options.Monitor.MaxSegments);
        if (options.Recalibration.Enabled)
        {
            _servedGrading = new ServedGrading(_outputs, options.Monitor.Window, bins);
        }
    }

    private readonly ServedGrading? _servedGrading;

    /// <summary>
    /// With recalibration on: the served probabilities' measures over the report window
    /// (<paramref name="total"/> false) or the whole run, as <see cref="Measures"/> gives the raw
    /// model's; null with recalibration off.
    /// </summary>
    public CalibrationSnapshot? ServedMeasures(bool total) => _servedGrading?.Measures(total);

    /// <summary>Whole-run counts.</summary>
    public ScoringCounters Counters { get; private set; } = new();

    /// <summary>Predictions waiting for late labels.</summary>
    public PendingLabelStore Pending { get; }

    /// <summary>Ids of the latest events (at most <c>Labels:MaxPending</c>) that came with their label, to recognise a late label for one as a duplicate.</summary>
    public RecentIds InlineLabelled { get; }

    /// <summary>The model over the whole run (multiclass: graded on the true class's probability, so its log-loss is the multiclass log-loss).</summary>
    public CalibrationTotals Totals => _channels[0].Totals;

    /// <summary>The class-prior baseline over the whole run.</summary>
    public CalibrationTotals PriorTotals => _channels[0].PriorTotals;

    /// <summary>The class names of a multiclass model, or null for a binary one.</summary>
    public IReadOnlyList<string>? ClassNames { get; }

    /// <summary>
    /// Multiclass: the top label over the whole run, graded (max_k p_k, [argmax = y]), so its
    /// ECE is the top-label (confidence) ECE; null for a binary model.
    /// </summary>
    public CalibrationTotals? TopLabel { get; private set; }

    /// <summary>
    /// Multiclass: labels over the whole run by observed class (row) and the class given the
    /// highest probability (column), K × K flattened row by row (a copy); null for a binary model.
    /// </summary>
    public long[]? Confusion => (long[]?)_confusion?.Clone();

    /// <summary>Multiclass: the top label over the reported rolling window; null for a binary model.</summary>
    public CalibrationWindow? TopLabelWindow { get; private set; }

    /// <summary>
    /// The model's measures over the reported window (<paramref name="total"/> false) or the
    /// whole run. Binary: the window's or total's own. Multiclass: log-loss on the true class
    /// (−ln p_y), the Brier score summed over classes, Σ_k (p_k − [y = k])² (Brier 1950, range
    /// 0–2), and from the top label the ECE (top-label or confidence ECE, Guo et al. 2017), mean
    /// p (mean confidence), mean y (accuracy) and their difference (over-confidence).
    /// </summary>
    public CalibrationSnapshot Measures(bool total) => Combine(total, prior: false);

    /// <summary>The class prior's measures, as <see cref="Measures"/> gives the model's.</summary>
    public CalibrationSnapshot PriorMeasures(bool total) => Combine(total, prior: true);

    /// <summary>Multiclass: each class against the rest over the window or the whole run; empty for binary.</summary>
    public IReadOnlyList<ClassMeasures> ClassMeasuresOf(bool total)
    {
        var classes = new List<ClassMeasures>(_channels.Length - 1);
        for (int c = 1; c < _channels.Length; c++)
        {
            var channel = _channels[c];
            var model = total ? channel.Totals.Current : channel.Window.Current;
            var prior = total ? channel.PriorTotals.Current : channel.PriorWindow.Current;
            classes.Add(new ClassMeasures(channel.ClassName!, model.MeanP, model.MeanY, model.Ece, prior.MeanP));
        }
        return classes;
    }

    /// <summary>
    /// Multiclass: the class-wise ECE, the mean over classes of each class's ECE one against the
    /// rest (Kull et al. 2019, "Beyond temperature scaling: obtaining well-calibrated multiclass
    /// probabilities with Dirichlet calibration"); NaN for binary or before any label.
    /// </summary>
    public double ClassWiseEce(bool total) => ClassNames is null ? double.NaN : ClassMeasuresOf(total).Average(c => c.Ece);

    private CalibrationSnapshot Combine(bool total, bool prior)
    {
        var whole = _channels[0];
        var own = total ? (prior ? whole.PriorTotals.Current : whole.Totals.Current) : (prior ? whole.PriorWindow.Current : whole.Window.Current);
        if (ClassNames is null || own.Count == 0)
        {
            return own;
        }
        double brier = 0;
        for (int c = 1; c < _channels.Length; c++)
        {
            var channel = _channels[c];
            brier += (total ? (prior ? channel.PriorTotals.Current : channel.Totals.Current) : (prior ? channel.PriorWindow.Current : channel.Window.Current)).Brier;
        }
        // The prior's top label is not tracked (it is the most frequent class so far); its
        // calibration figures are left out rather than guessed.
        var top = prior ? CalibrationSnapshot.Empty : total ? TopLabel!.Current : TopLabelWindow!.Current;
        return new CalibrationSnapshot(own.Count, own.LogLoss, brier, top.Ece, top.MeanP, top.MeanY, top.CalibrationInTheLarge);
    }

    /// <summary>The grading channels: the whole model first, then (multiclass) each class against the rest.</summary>
    public IReadOnlyList<GradingChannel> Channels => _channels;

    /// <summary>The models, in the order their keys first appeared.</summary>
    public IReadOnlyList<KeyedModel> Models => _models;

    /// <summary>The alert rules and their states.</summary>
    public IEnumerable<AlertRule> Rules => _channels.SelectMany(c => c.Rules.Select(r => r.Rule));

    /// <summary>The reported rolling window of the model.</summary>
    public CalibrationWindow Window => _channels[0].Window;

    /// <summary>The reported rolling window of the baseline.</summary>
    public CalibrationWindow PriorWindow => _channels[0].PriorWindow;

    /// <summary>The options the engine runs with.</summary>
    public DriftlineOptions Options => _options;

    /// <summary>Latest event time seen, as UTC ticks (or no time).</summary>
    public long ClockTicks => _clockTicks;

    /// <summary>Why the last <see cref="StepOutcome.Rejected"/> record was refused.</summary>
    public string? RejectReason { get; private set; }

    /// <summary>The per-segment windows when <c>Monitor:SegmentBy</c> is set, else null.</summary>
    public SegmentTracker? Segments => _segments;


    /// <summary>
    /// Called for every graded label with its whole-model log-loss (the raw model's), in grading
    /// order: what a challenger is judged on. Null (the default) costs one check a label.
    /// </summary>
    public Action<GradedLabel>? LabelGraded { get; set; }

    /// <summary>
    /// Where the stream stands for what is being reported: the live counts on the scoring
    /// thread, or, while <see cref="GradeDeferred"/> runs, the counts captured when the label or
    /// prediction in hand was scored.
    /// </summary>
    public EnginePosition Position => _replaying ?? LivePosition;

    private EnginePosition LivePosition => new(Counters.Events, Counters.Labels, Counters.LateLabels, Pending.Expired, _clockTicks);

    /// <summary>
    /// True when the windows, totals, alert rules and segments may be updated on a stage of their
    /// own (<see cref="DeferGradingTo"/>): nothing the scoring thread does next depends on them.
    /// Not with recalibration (the served probability of the next event learns from each label,
    /// and with <c>Recalibration:Mode=OnAlert</c> from the rules' state), nor with a
    /// <see cref="LabelGraded"/> listener (a challenger's decisions join the champion's alerts).
    /// </summary>
    public bool CanDeferGrading => !_options.Recalibration.Enabled && LabelGraded is null;

    /// <summary>
    /// From now on, graded labels (and the position after each prediction) go into
    /// <paramref name="log"/> instead of being graded, until it is set to another log or null;
    /// <see cref="GradeDeferred"/> then grades them, in order, on any one thread.
    /// </summary>
    /// <exception cref="InvalidOperationException">Grading cannot be deferred (<see cref="CanDeferGrading"/>).</exception>
    public void DeferGradingTo(GradingLog? log)
    {
        if (log is not null && !CanDeferGrading)
        {
            throw new InvalidOperationException("grading cannot be deferred with recalibration or a LabelGraded listener");
        }
        _deferred = log;
    }

    /// <summary>
    /// Grades what <paramref name="log"/> holds, in stream order: each label updates the windows,
    /// totals, rules and segments and may raise alerts and metric rows into the sink, and the sink
    /// hears of each prediction (<see cref="IScoringSink.OnScored"/>) between them, with
    /// <see cref="Position"/> as it was when each was scored. The outputs are those of inline
    /// grading, byte for byte. Not concurrently with itself; the scoring thread may go on.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void GradeDeferred(GradingLog log)
    {
        ArgumentNullException.ThrowIfNull(log);
        var ticks = log.Ticks;
        int t = 0;
        try
        {
            foreach (ref readonly var entry in log.Labels)
            {
                for (; t < entry.Ticks; t++)
                {
                    _replaying = ticks[t];
                    _sink.OnScored();
                }
                _replaying = entry.Position;
                GradeMeasures(log.P(entry), log.PriorP(entry), entry.Y, entry.Id, entry.TimeTicks, entry.Segment);
                MetricsIfDue(entry.TimeTicks);
            }
            for (; t < ticks.Length; t++)
            {
                _replaying = ticks[t];
                _sink.OnScored();
            }
        }
        finally
        {
            _replaying = null;
        }
    }

    // After each prediction: the sink hears of it now, or the grading stage tells it later.
    private void Scored()
    {
        if (_deferred is { } log)
        {
            log.AddTick(LivePosition);
        }
        else
        {
            _sink.OnScored();
        }
    }

    /// <summary>Hands <paramref name="alert"/> to this engine's sink, as if a rule had raised it (a challenger's decision, made outside the rules).</summary>
    public void Emit(AlertTransition alert) => _sink.OnAlert(alert);

    /// <summary>Processes one parsed record.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public StepOutcome Process(ParsedRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        long time = record.TimeTicks;
        if (record.HasTime && time > _clockTicks)
        {
            if (_clockTicks != ParsedRecord.NoTime && time - _clockTicks > _maxSkewTicks)
            {
                // One event dated far ahead must not age out every waiting prediction nor
                // empty the time windows: it moves the clock by Labels:MaxClockSkew at most,
                // and the engine keeps it at that time. A real jump is caught up by the
                // events that follow it, one skew at a time.
                time = _clockTicks + _maxSkewTicks;
                Counters.ClampedTimes++;
            }
            _clockTicks = time;
            Pending.ExpireBefore(_clockTicks);
        }
        return record.Kind switch
        {
            RecordKind.Event => ScoreEvent(record, time),
            RecordKind.Label => JoinLabel(record, time),
            RecordKind.Probability => RecordProbability(record, time),
            _ => throw new UnreachableException(),
        };
    }

    // An event whose id already waits for a label is refused: a later label could not tell
    // which prediction it grades, and a redelivered event would be scored twice.
    private bool RefuseWaitingId(ParsedRecord record)
    {
        if (!Pending.IsWaiting(record.Id))
        {
            return false;
        }
        Counters.Rejected++;
        RejectReason = $"id '{record.Id}' already has a prediction waiting for its label; a second event with that id is refused";
        return true;
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private StepOutcome ScoreEvent(ParsedRecord record, long time)
    {
        if (RefuseWaitingId(record))
        {
            return StepOutcome.Rejected;
        }
        int index = ModelFor(record.Key ?? DefaultKey);
        if (index < 0)
        {
            return StepOutcome.Rejected;
        }
        var model = _models[index];
        model.Featurizer.Featurize(record, _x);
        var p = _p;
        var priorP = _priorP;
        model.Learner.Score(_x, p);
        model.Prior.Predict(priorP);
        model.Scored++;
        Counters.Events++;
        // Progressive: the served probability uses only labels graded before this event.
        var served = Serve(model, p);
        _sink.OnPrediction(_outputs != 1
            ? new Prediction(record.Id, model.Key, double.NaN, model.Learner.Updates, record.TimeTicks,
                served.IsEmpty ? (double[])p.Clone() : served.ToArray(), ClassNames, RawClasses: served.IsEmpty ? null : (double[])p.Clone())
            : served.IsEmpty
                ? new Prediction(record.Id, model.Key, p[0], model.Learner.Updates, record.TimeTicks)
                : new Prediction(record.Id, model.Key, served[0], model.Learner.Updates, record.TimeTicks, Raw: p[0]));
        Scored();

        if (record.HasLabel)
        {
            Counters.InlineLabels++;
            Grade(model, p, priorP, record.Label, record.Id, time, record.Segment, served);
            model.Learner.Update(_x, record.Label, p);
            InlineLabelled.Add(record.Id);
            return StepOutcome.ScoredAndLearned;
        }
        Pending.Add(record.Id, time, index, p, priorP, served, record.Segment, _x.Slots, _x.Values);
        return StepOutcome.Scored;
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private StepOutcome JoinLabel(ParsedRecord record, long time)
    {
        switch (Pending.TryJoin(record.Id, out var pending))
        {
            case LabelJoin.UnknownId when InlineLabelled.Contains(record.Id):
                // Its event came with its label: this one is a second label.
                Counters.DuplicateLabels++;
                return StepOutcome.DuplicateLabel;
            case LabelJoin.UnknownId:
                Counters.UnknownLabels++;
                return StepOutcome.UnknownLabel;
            case LabelJoin.Duplicate:
                Counters.DuplicateLabels++;
                return StepOutcome.DuplicateLabel;
        }
        Debug.Assert(pending is not null, "a joined label has its prediction");
        Counters.LateLabels++;
        var model = _models[pending.Model];
        time = record.HasTime ? time : pending.TimeTicks;
        if (_outputs == 1)
        {
            double p = pending.P;
            double priorP = pending.PriorP;
            double served = pending.Served;
            Grade(model, new ReadOnlySpan<double>(in p), new ReadOnlySpan<double>(in priorP), record.Label, record.Id, time, pending.Segment,
                double.IsNaN(served) ? [] : new ReadOnlySpan<double>(in served));
        }
        else
        {
            Grade(model, pending.ClassP, pending.ClassPriorP, record.Label, record.Id, time, pending.Segment, pending.ServedClassP);
        }
        if (pending.Count > 0)
        {
            _lateX.CopyFrom(pending.Slots, pending.Values);
            model.Learner.Update(_lateX, record.Label);
        }
        return StepOutcome.LateLabelJoined;
    }

    private StepOutcome RecordProbability(ParsedRecord record, long time)
    {
        if (RefuseWaitingId(record))
        {
            return StepOutcome.Rejected;
        }
        int index = ModelFor(record.Key ?? DefaultKey);
        if (index < 0)
        {
            return StepOutcome.Rejected;
        }
        var model = _models[index];
        if (_outputs != 1)
        {
            return RecordClassProbabilities(record, index, model, time);
        }
        double priorP = model.Prior.Predict();
        double p = record.Probability;
        Counters.Probabilities++;
        // With recalibration on, monitor serves the corrected stream of a model it does not own:
        // each record's p is the raw one, and its served p goes out as a prediction.
        var served = Serve(model, new ReadOnlySpan<double>(in p));
        if (!served.IsEmpty)
        {
            _sink.OnPrediction(new Prediction(record.Id, model.Key, served[0], model.Recalibration!.Labels, record.TimeTicks, Raw: p));
            Scored();
        }
        if (record.HasLabel)
        {
            Counters.InlineLabels++;
            Grade(model, new ReadOnlySpan<double>(in p), new ReadOnlySpan<double>(in priorP), record.Label, record.Id, time, record.Segment, served);
            InlineLabelled.Add(record.Id);
            return StepOutcome.ProbabilityRecorded;
        }
        Pending.Add(record.Id, time, index, new ReadOnlySpan<double>(in p), new ReadOnlySpan<double>(in priorP), served, record.Segment, [], []);
        return StepOutcome.ProbabilityRecorded;
    }

    private StepOutcome RecordClassProbabilities(ParsedRecord record, int index, KeyedModel model, long time)
    {
        var p = record.ClassProbabilities;
        if (p.Length != _outputs)
        {
            Counters.Rejected++;
            RejectReason = $"p must be an object over the {_outputs} classes of Model:Classes ({string.Join(", ", ClassNames!)})";
            return StepOutcome.Rejected;
        }
        model.Prior.Predict(_priorP);
        Counters.Probabilities++;
        // As for a binary model: with recalibration on, the served class probabilities go out.
        var served = Serve(model, p);
        if (!served.IsEmpty)
        {
            _sink.OnPrediction(new Prediction(record.Id, model.Key, double.NaN, model.Recalibration!.Labels, record.TimeTicks,
                served.ToArray(), ClassNames, RawClasses: p.ToArray()));
        }
        if (record.HasLabel)
        {
            Counters.InlineLabels++;
            Grade(model, p, _priorP, record.Label, record.Id, time, record.Segment, served);
            InlineLabelled.Add(record.Id);
            return StepOutcome.ProbabilityRecorded;
        }
        Pending.Add(record.Id, time, index, p, _priorP, served, record.Segment, [], []);
        return StepOutcome.ProbabilityRecorded;
    }

    // The grading step: one graded label becomes one (p, y) pair per channel. Binary: the
    // pair itself. Multiclass: (p_y, 1) for the whole model, whose log-loss is then −ln p_y,
    // and (p_k, [y = k]) for each class k against the rest.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void Grade(KeyedModel model, ReadOnlySpan<double> p, ReadOnlySpan<double> priorP, int y, string id, long timeTicks, string? segment, ReadOnlySpan<double> served)
    {
        // The prior predicts the next event and the label count numbers the labels: both stay
        // with the scoring thread even when the rest of the grading is deferred.
        model.Prior.Add(y);
        Counters.Labels++;
        if (_deferred is { } log)
        {
            log.AddLabel(p, priorP, y, id, timeTicks, segment, LivePosition);
            return;
        }
        LabelGraded?.Invoke(new GradedLabel(id, timeTicks, PredictionScores.LogLoss(_outputs == 1 ? p[0] : p[y], _outputs == 1 ? y : 1)));
        GradeMeasures(p, priorP, y, id, timeTicks, segment);
        if (model.Recalibration is { } recalibration)
        {
            Recalibrate(recalibration, p, served, y);
        }
        MetricsIfDue(timeTicks);
    }

    // The windows, totals, rules and segments of one graded label, on whichever thread grades.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void GradeMeasures(ReadOnlySpan<double> p, ReadOnlySpan<double> priorP, int y, string id, long timeTicks, string? segment)
    {
        if (_outputs == 1)
        {
            _segments?.Add(segment, p[0], y);
            GradeChannel(_channels[0], p[0], priorP[0], y, id, timeTicks, explain: true);
        }
        else
        {
            int top = 0;
            for (int k = 1; k < p.Length; k++)
            {
                if (p[k] > p[top])
                {
                    top = k;
                }
            }
            _confusion![y * p.Length + top]++;
            var topTerms = GradedTerms.Of(p[top], top == y ? 1 : 0, _edges);
            TopLabel!.Add(topTerms);
            TopLabelWindow!.Add(topTerms);
            GradeChannel(_channels[0], p[y], priorP[y], 1, id, timeTicks, explain: false);
            for (int k = 0; k < p.Length; k++)
            {
                GradeChannel(_channels[k + 1], p[k], priorP[k], k == y ? 1 : 0, id, timeTicks, explain: true);
            }
        }
    }

    private void MetricsIfDue(long timeTicks)
    {
        if (Position.Labels % _options.Monitor.MetricsEvery == 0)
        {
            _sink.OnMetrics(CurrentMetrics(timeTicks));
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void GradeChannel(GradingChannel channel, double p, double priorP, int y, string id, long timeTicks, bool explain)
    {
        // Every window and total shares the bins, so each prediction's terms are computed once.
        var terms = GradedTerms.Of(p, y, _edges);
        var priorTerms = GradedTerms.Of(priorP, y, _edges);
        channel.Add(terms, priorTerms, timeTicks);
        var rules = channel.Rules;
        for (int r = 0; r < rules.Length; r++)
        {
            var rule = rules[r].Rule;
            var (window, priorWindow) = channel.WindowsOf(r);
            bool? change = rule.Evaluate(window, priorWindow, p, y, out double value);
            if (change is bool raised)
            {
                if (raised)
                {
                    Counters.AlertsRaised++;
                    if (!AnyRaisedBesides(rule))
                    {
                        Counters.Incidents++;
                    }
                }
                else
                {
                    Counters.AlertsCleared++;
                }
                var o = rule.Options;
                double threshold = rule.Cusum is { } cusum ? (raised ? cusum.Threshold : cusum.ClearFraction * cusum.Threshold) : raised ? o.Raise : o.Clear;
                _sink.OnAlert(new AlertTransition(o.Name, raised, o.Metric, value, threshold, o.Window, id, timeTicks, Position.Labels,
                    o.Severity, explain ? AlertExplanation.Of(window, _segments?.Worst()) : null, o.RelativeTo, raised ? rule.Cusum?.RaisedBy?.Describe() : null,
                    channel.ClassName, Counters.Incidents));
            }
        }
    }

    // The windows and rules above watch the raw model, which is still broken and must say so;
    // the served stream is measured beside it. Then the correction learns from the label, after
    // the label's own served probability was made (progressive).
    // A prediction restored from a snapshot written before its served probabilities were kept
    // has none: it is left out of the served measures rather than guessed.
    private void Recalibrate(IRecalibration recalibration, ReadOnlySpan<double> raw, ReadOnlySpan<double> served, int y)
    {
        if (served.Length == raw.Length && double.IsFinite(served[0]))
        {
            _servedGrading!.Add(served, y);
        }
        recalibration.Learn(raw, y);
        if (_options.Recalibration.Mode == RecalibrationMode.OnAlert)
        {
            // Any calibration rule of the model, whole or (multiclass) per class, engages it.
            bool raised = false;
            foreach (var channel in _channels)
            {
                foreach (var (rule, _) in channel.Rules)
                {
                    raised |= rule.Raised && rule.Options.WatchesCalibration;
                }
            }
            recalibration.ObserveRules(raised);
        }
    }

    // The probabilities to serve for the model's own p, in the engine's buffer; empty with
    // recalibration off.
    private ReadOnlySpan<double> Serve(KeyedModel model, ReadOnlySpan<double> p)
    {
        if (model.Recalibration is not { } recalibration)
        {
            return [];
        }
        recalibration.Apply(p, _served);
        return _served;
    }


    // Only at a raise (rare), so a scan of the rules is fine.
    private bool AnyRaisedBesides(AlertRule rule)
    {
        foreach (var other in Rules)
        {
            if (other != rule && other.Raised)
            {
                return true;
            }
        }
        return false;
    }

    /// <summary>The measures now, as reported every <c>Monitor:MetricsEvery</c> labels.</summary>
    public MetricsRow CurrentMetrics(long timeTicks) => CurrentMetrics(timeTicks, Position);

    private MetricsRow CurrentMetrics(long timeTicks, EnginePosition at) => new(at.Events, at.Labels, timeTicks,
        Measures(false), PriorMeasures(false), Measures(true), PriorMeasures(true), at.LateLabels, at.Expired,
        ClassNames is null ? null : ClassMeasuresOf(false), ClassWiseEce(false), ServedMeasures(false));

    /// <summary>The engine's whole state, for a checkpoint or a saved model.</summary>
    public EngineSnapshot Snapshot()
    {
        var snapshot = Capture();
        _servedGrading?.Export(snapshot);
        return snapshot;
    }

    private EngineSnapshot Capture()
    {
        // The whole model's channel once: its windows' contents are copied, which three calls did three times.
        var main = ExportChannel(_channels[0]);
        return new EngineSnapshot
        {
            Options = _options,
            Models = _models.Select(m => new ModelSnapshot
            {
                Key = m.Key,
                Learner = m.Learner.Export(),
                Scaling = m.Featurizer.Scaler.Export().ToList(),
                PriorCount = m.Prior.Count,
                PriorPositives = m.Prior.Positives,
                PriorClassCounts = ClassNames is null ? null : m.Prior.ClassCounts.ToArray(),
                Scored = m.Scored,
                Recalibration = m.Recalibration?.Export(),
            }).ToList(),
            // One block copy of the store's records into the array kept for it, written to JSON from there.
            PendingEntries = PendingEntries.Copy(Pending, _outputs, _pendingCopies),
            Segments = _segments?.Export(),
            InlineLabelledEntries = RecentIdEntries.Copy(InlineLabelled, _inlineCopies),
            ExpiredLabels = Pending.Expired,
            Windows = main.Windows,
            TimeWindows = main.TimeWindows,
            Totals = Totals.ToState(),
            PriorTotals = PriorTotals.ToState(),
            Rules = main.Rules,
            Classes = ClassNames is null ? null : _channels.Skip(1).Select(ExportChannel).ToList(),
            TopLabel = TopLabel?.ToState(),
            TopLabelWindow = TopLabelWindow?.ToArray(),
            Confusion = _confusion?.ToArray(),
            Counters = Counters.Copy(),
            ClockTicks = _clockTicks,
        };
    }

    /// <summary>
    /// Creates an engine that continues from <paramref name="snapshot"/>, with the snapshot's
    /// options. Windows of sizes the snapshot lacks start empty.
    /// </summary>
    public static ScoringEngine Restore(EngineSnapshot snapshot, IScoringSink sink)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        var engine = new ScoringEngine(snapshot.Options, sink);
        engine.Load(snapshot);
        return engine;
    }

    /// <summary>
    /// Loads the models of <paramref name="snapshot"/> (weights, scaling statistics and prior
    /// counts) into this engine, which must not have scored yet: a warm start from a batch fit
    /// or a saved run. Pending labels, windows and counts are not taken over.
    /// </summary>
    public void LoadModels(EngineSnapshot snapshot)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        if (Counters.Events > 0 || _models.Count > 0)
        {
            throw new InvalidOperationException("models can be loaded only before the first event");
        }
        foreach (var m in snapshot.Models)
        {
            int index = ModelFor(m.Key);
            var model = _models[index];
            model.Learner.Import(m.Learner);
            foreach (var stats in m.Scaling)
            {
                model.Featurizer.Scaler.Import(stats);
            }
            model.Prior = m.PriorClassCounts is { } counts ? PriorBaseline.Restore(counts) : PriorBaseline.Restore(m.PriorCount, m.PriorPositives);
            if (model.Prior.Classes != _options.Model.ClassCount)
            {
                throw new InvalidDataException($"the saved model's class prior counts {model.Prior.Classes} classes but this configuration has {_options.Model.ClassCount}");
            }
            model.Scored = m.Scored;
            if (model.Recalibration is not null && m.Recalibration is { } state)
            {
                model.Recalibration.Import(state);
            }
        }
    }

    private void Load(EngineSnapshot snapshot)
    {
        LoadModels(snapshot);
        foreach (var e in snapshot.Pending)
        {
            if (e.ClassP is { } classP && e.ClassPriorP is { } classPriorP)
            {
                Pending.Add(e.Id, e.TimeTicks, e.Model, classP, classPriorP, e.ServedClassP is { } servedClassP && servedClassP.Length == classP.Length ? servedClassP : [], e.Segment, e.Slots ?? [], e.Values ?? []);
            }
            else
            {
                double p = e.P;
                double priorP = e.PriorP;
                double served = e.Served ?? double.NaN;
                Pending.Add(e.Id, e.TimeTicks, e.Model, new ReadOnlySpan<double>(in p), new ReadOnlySpan<double>(in priorP), new ReadOnlySpan<double>(in served), e.Segment, e.Slots ?? [], e.Values ?? []);
            }
            if (e.Labelled)
            {
                Pending.TryJoin(e.Id, out _);
            }
        }
        Pending.RestoreCounters(snapshot.ExpiredLabels);
        foreach (var id in snapshot.InlineLabelled ?? [])
        {
            InlineLabelled.Add(id);
        }
        ImportChannel(_channels[0], new ChannelSnapshot
        {
            Windows = snapshot.Windows,
            TimeWindows = snapshot.TimeWindows,
            Totals = snapshot.Totals,
            PriorTotals = snapshot.PriorTotals,
            Rules = snapshot.Rules,
        });
        for (int c = 1; c < _channels.Length; c++)
        {
            if (snapshot.Classes?.FirstOrDefault(saved => saved.Class == _channels[c].ClassName) is { } saved)
            {
                ImportChannel(_channels[c], saved);
            }
        }
        if (snapshot.TopLabel is not null && TopLabel is not null)
        {
            TopLabel = CalibrationTotals.Restore(snapshot.TopLabel);
        }
        if (snapshot.Confusion is { } confusion && _confusion is not null && confusion.Length == _confusion.Length)
        {
            confusion.CopyTo(_confusion, 0);
        }
        if (snapshot.TopLabelWindow is not null && TopLabelWindow is not null)
        {
            TopLabelWindow = CalibrationWindow.Restore(_options.Monitor.Window, _options.Monitor.Bins, snapshot.TopLabelWindow);
        }
        if (_segments is not null && snapshot.Segments is { } segments)
        {
            _segments.Import(segments);
        }
        Counters = snapshot.Counters.Copy();
        _clockTicks = snapshot.ClockTicks;
        _servedGrading?.Import(snapshot);
    }

    private static ChannelSnapshot ExportChannel(GradingChannel channel) => new()
    {
        Class = channel.ClassName,
        Windows = channel.Windows.Select(w => new WindowSnapshot { Size = w.Size, Model = w.Model.ToArray(), Prior = w.Prior.ToArray() }).ToList(),
        TimeWindows = channel.TimeWindows.Select(w => new TimeWindowSnapshot
        {
            Span = w.Span,
            MaxCount = w.Model.MaxCount,
            ModelLatest = w.Model.Latest,
            PriorLatest = w.Prior.Latest,
            Model = w.Model.ToArray(),
            Prior = w.Prior.ToArray(),
        }).ToList(),
        Totals = channel.Totals.ToState(),
        PriorTotals = channel.PriorTotals.ToState(),
        Rules = channel.Rules.Select(r => SnapshotRule(r.Rule)).ToList(),
    };

    private void ImportChannel(GradingChannel channel, ChannelSnapshot snapshot)
    {
        int bins = _options.Monitor.Bins;
        var windows = channel.Windows;
        for (int i = 0; i < windows.Length; i++)
        {
            var saved = snapshot.Windows.FirstOrDefault(w => w.Size == windows[i].Size);
            if (saved is not null)
            {
                windows[i] = (saved.Size, CalibrationWindow.Restore(saved.Size, bins, saved.Model), CalibrationWindow.Restore(saved.Size, bins, saved.Prior));
            }
        }
        var timeWindows = channel.TimeWindows;
        for (int i = 0; i < timeWindows.Length; i++)
        {
            var (span, model, _) = timeWindows[i];
            var saved = snapshot.TimeWindows.FirstOrDefault(w => w.Span == span && w.MaxCount == model.MaxCount);
            if (saved is not null)
            {
                timeWindows[i] = (span, TimeWindow.Restore(span, saved.MaxCount, bins, saved.ModelLatest, saved.Model),
                    TimeWindow.Restore(span, saved.MaxCount, bins, saved.PriorLatest, saved.Prior));
            }
        }
        if (snapshot.Totals is not null)
        {
            channel.Totals = CalibrationTotals.Restore(snapshot.Totals);
        }
        if (snapshot.PriorTotals is not null)
        {
            channel.PriorTotals = CalibrationTotals.Restore(snapshot.PriorTotals);
        }
        foreach (var (rule, _) in channel.Rules)
        {
            var saved = snapshot.Rules.FirstOrDefault(r => r.Name == rule.Options.Name);
            if (saved is not null)
            {
                rule.Raised = saved.Raised;
                rule.RaisedCount = saved.RaisedCount;
                rule.Reference = saved.Reference;
                rule.Seen = saved.Seen;
                rule.ClearedAt = saved.ClearedAt;
                if (rule.Cusum is { } cusum && saved.Cusums is { } statistics)
                {
                    cusum.Import(statistics, saved.CusumRaised, saved.CusumCount, saved.CusumDetections, saved.CusumClears, saved.CusumState);
                }
                rule.ImportMonitors(saved);
            }
        }
    }

    // Every rule continues exactly after a restore: the calibration test, the loss detectors,
    // the AUC window and the held Hosmer–Lemeshow value are all in the snapshot.
    private static RuleSnapshot SnapshotRule(AlertRule rule)
    {
        var saved = new RuleSnapshot
        {
            Name = rule.Options.Name,
            Raised = rule.Raised,
            RaisedCount = rule.RaisedCount,
            Reference = rule.Reference,
            Seen = rule.Seen,
            ClearedAt = rule.ClearedAt,
        };
        if (rule.Cusum is { } cusum)
        {
            var state = cusum.Export();
            saved.Cusums = state.Statistics;
            saved.CusumRaised = state.Raised;
            saved.CusumCount = state.Count;
            saved.CusumDetections = state.Detections;
            saved.CusumClears = state.Clears;
            saved.CusumState = state.State;
        }
        rule.ExportMonitors(saved);
        return saved;
    }

    private int ModelFor(string key)
    {
        // Consecutive events mostly share a key, often the very same string (the default key,
        // or a parser's interned one): a reference check skips the hash lookup.
        if (ReferenceEquals(key, _lastKey))
        {
            return _lastModel;
        }
        if (_modelIndex.TryGetValue(key, out int index))
        {
            _lastKey = key;
            _lastModel = index;
            return index;
        }
        if (_models.Count >= _options.Model.MaxModels)
        {
            Counters.Rejected++;
            RejectReason = $"key '{key}' would be model {_models.Count + 1}, beyond Model:MaxModels = {_options.Model.MaxModels}";
            return -1;
        }
        index = _models.Count;
        _models.Add(new KeyedModel(key, _options.Model)
        {
            Recalibration = _options.Recalibration.Enabled ? IRecalibration.Create(_options.Recalibration, _outputs) : null,
        });
        _modelIndex.Add(key, index);
        return index;
    }
}
