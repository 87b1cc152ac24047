using Driftline.Core.Alerts;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Snapshots;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

public sealed class ScoringEngineTests
{
    private static DriftlineOptions Options(int bits = 12) => new()
    {
        Model = new ModelOptions { HashBits = bits },
        Monitor = new MonitorOptions { Window = 100, MetricsEvery = 50 },
        Alerts = [],
    };

    [Fact]
    public void Process_InlineLabel_ScoresBeforeLearning()
    {
        // Progressive validation: the label of an event never influences its own score.
        var withLabel = new RecordingSink();
        var withoutLabel = new RecordingSink();
        var a = new ScoringEngine(Options(), withLabel);
        var b = new ScoringEngine(Options(), withoutLabel);
        var stream = new KnownModelStream(1);
        for (int i = 0; i < 200; i++)
        {
            var e = stream.Next(i);
            EngineDriver.Feed(a, [e.Json]);
            EngineDriver.Feed(b, [e.Json.Replace($",\"label\":{e.Label}", "", StringComparison.Ordinal), $"{{\"id\":\"e{i}\",\"label\":{e.Label}}}"]);
        }
        Assert.Equal(0.5, withLabel.Predictions[0].P);
        Assert.Equal(withLabel.Predictions.Select(p => p.P), withoutLabel.Predictions.Select(p => p.P));
        Assert.Equal(a.Totals.Current, b.Totals.Current);
        Assert.Equal(200, a.Counters.InlineLabels);
        Assert.Equal(200, b.Counters.LateLabels);
    }

    [Fact]
    public void Process_LateLabel_GradesTheProbabilityThatWasEmitted()
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(Options(), sink);
        var stream = new KnownModelStream(2);
        var lines = Enumerable.Range(0, 50).Select(i => stream.Next(i).Json).ToList();
        EngineDriver.Feed(engine, lines);
        var outcomes = EngineDriver.Feed(engine,
            ["""{"id":"late-1","features":{"level":"a"}}""", """{"id":"e0","label":1}""", """{"id":"late-1","label":0}""", """{"id":"late-1","label":0}""", """{"id":"nobody","label":0}"""]);
        Assert.Equal([StepOutcome.Scored, StepOutcome.DuplicateLabel, StepOutcome.LateLabelJoined, StepOutcome.DuplicateLabel, StepOutcome.UnknownLabel], outcomes);
        // e0 was labelled inline already, so a late label for it is a second one; late-1 is graded at the p it was given.
        double emitted = sink.Predictions[^1].P;
        var window = engine.Window.ToArray();
        Assert.Equal(emitted, window[^1].P);
        Assert.Equal(0, window[^1].Y);
        Assert.Equal(2, engine.Counters.DuplicateLabels);
        Assert.Equal(1, engine.Counters.UnknownLabels);
    }

    [Fact]
    public void Restore_FromSnapshotMidStream_ContinuesExactlyAsAnUninterruptedRun()
    {
        var lines = LinesWithLateLabels(3, 3000);
        var options = Options();
        options.Model.HalfLifeLabels = 500;
        options.Alerts = null;

        var whole = new RecordingSink();
        var uninterrupted = new ScoringEngine(options, whole);
        EngineDriver.Feed(uninterrupted, lines);

        var first = new RecordingSink();
        var before = new ScoringEngine(options, first);
        EngineDriver.Feed(before, lines.Take(1700));
        using var saved = new MemoryStream();
        SnapshotCodec.Write(before.Snapshot(), saved);
        saved.Position = 0;
        var second = new RecordingSink();
        var after = ScoringEngine.Restore(SnapshotCodec.Read(saved), second);
        EngineDriver.Feed(after, lines.Skip(1700));

        Assert.Equal(whole.Predictions, first.Predictions.Concat(second.Predictions));
        Assert.Equal(uninterrupted.Totals.Current, after.Totals.Current);
        Assert.Equal(uninterrupted.Counters.LateLabels, after.Counters.LateLabels);
        Assert.Equal(uninterrupted.Models[0].Learner.Export().First, after.Models[0].Learner.Export().First);
    }

    [Fact]
    public void Restore_RulesWithLossDetectorsAucHosmerLemeshowAndSegments_EndInTheStateOfAnUninterruptedRun()
    {
        // A break at event 1500 gives the detectors something to hold; the stream is cut after it.
        var lines = LinesWithLateLabels(4, 4000, breakAt: 1500);
        var options = Options();
        options.Model.HalfLifeLabels = 500;
        options.Monitor.SegmentBy = "level";
        options.Alerts =
        [
            new AlertRuleOptions { Name = "shift", Metric = AlertMetric.LossShift, Window = 200, MinLabels = 50 },
            new AlertRuleOptions { Name = "change", Metric = AlertMetric.LossChange, Window = 200, MinLabels = 50 },
            new AlertRuleOptions { Name = "auc", Metric = AlertMetric.Auc, Window = 300, MinLabels = 100, Raise = 0.7, Clear = 0.75, Direction = AlertDirection.Below },
            new AlertRuleOptions { Name = "hl", Metric = AlertMetric.HosmerLemeshowP, Window = 400, MinLabels = 200, Raise = 0.001, Clear = 0.05, Direction = AlertDirection.Below },
        ];
        Assert.Empty(options.Validate());

        var whole = new RecordingSink();
        var uninterrupted = new ScoringEngine(options, whole);
        EngineDriver.Feed(uninterrupted, lines);

        var first = new RecordingSink();
        var before = new ScoringEngine(options, first);
        EngineDriver.Feed(before, lines.Take(2500));
        using var saved = new MemoryStream();
        SnapshotCodec.Write(before.Snapshot(), saved);
        saved.Position = 0;
        var second = new RecordingSink();
        var after = ScoringEngine.Restore(SnapshotCodec.Read(saved), second);
        EngineDriver.Feed(after, lines.Skip(2500));

        Assert.NotEmpty(whole.Alerts);
        Assert.Equal(whole.Alerts.Select(Describe), first.Alerts.Concat(second.Alerts).Select(Describe));
        Assert.Equal(Json(uninterrupted.Snapshot()), Json(after.Snapshot()));
        Assert.NotEmpty(after.Snapshot().Segments!);

        static string Describe(AlertTransition a) => $"{a.Rule} {a.Raised} {a.Labels} {a.Value:R}";
        static string Json(EngineSnapshot snapshot)
        {
            using var buffer = new MemoryStream();
            SnapshotCodec.Write(snapshot, buffer);
            return System.Text.Encoding.UTF8.GetString(buffer.ToArray());
        }
    }

    // Events from a known model, every third labelled late (20 records later); from breakAt on,
    // the true log-odds shift by 2.
    private static List<string> LinesWithLateLabels(int seed, int events, int breakAt = int.MaxValue)
    {
        var stream = new KnownModelStream(seed);
        var lines = new List<string>();
        var late = new Queue<string>();
        for (int i = 0; i < events; i++)
        {
            if (i == breakAt)
            {
                stream.Shift = 2;
            }
            var e = stream.Next(i, withLabel: i % 3 != 0);
            lines.Add(e.Json);
            if (i % 3 == 0)
            {
                late.Enqueue($"{{\"id\":\"e{i}\",\"label\":{e.Label}}}");
            }
            if (late.Count > 20)
            {
                lines.Add(late.Dequeue());
            }
        }
        return lines;
    }

    [Fact]
    public void Process_KeysBeyondMaxModels_AreRejectedWithTheOptionNamed()
    {
        var options = Options();
        options.Model.MaxModels = 2;
        var engine = new ScoringEngine(options, new RecordingSink());
        var outcomes = EngineDriver.Feed(engine, ["""{"id":"1","key":"a","features":{}}""", """{"id":"2","key":"b","features":{}}""", """{"id":"3","key":"c","features":{}}"""]);
        Assert.Equal(StepOutcome.Rejected, outcomes[2]);
        Assert.Contains("Model:MaxModels", engine.RejectReason, StringComparison.Ordinal);
        Assert.Equal(2, engine.Models.Count);
    }

    [Fact]
    public void Process_ExternalProbabilities_AreGradedWithoutAModelUpdate()
    {
        var engine = new ScoringEngine(Options(), new RecordingSink());
        EngineDriver.Feed(engine, ["""{"id":"1","p":0.2,"label":0}""", """{"id":"2","p":0.9}""", """{"id":"2","label":1}"""]);
        Assert.Equal(2, engine.Totals.Current.Count);
        // Mean of (0.2 - 0)^2 and (0.9 - 1)^2: Brier = 0.025.
        Assert.Equal(0.025, engine.Totals.Current.Brier, 12);
        Assert.Equal(0, engine.Models[0].Learner.Updates);
    }

    [Theory]
    [InlineData("{}")]
    [InlineData("""{"format":"something-else","format_version":1}""")]
    [InlineData("""{"format":"driftline-state","format_version":99}""")]
    [InlineData("[1,2,3]")]
    public void Read_NotASnapshot_IsRefusedWithAReason(string json)
    {
        using var stream = new MemoryStream(System.Text.Encoding.UTF8.GetBytes(json));
        var error = Assert.Throws<InvalidDataException>(() => SnapshotCodec.Read(stream));
        Assert.Contains("snapshot", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Process_TimeWindowRule_SeesOnlyTheLastHourOfLabels()
    {
        // Ten hours of calibrated external probabilities, then 30 minutes where every outcome
        // is positive at p = 0.5. Over the last hour that is a gap of about 0.25; over the
        // last 10,000 labels it is about 0.02.
        var options = Options();
        options.Alerts =
        [
            new() { Name = "hour", Metric = Driftline.Core.Alerts.AlertMetric.CalibrationGap, WindowTime = TimeSpan.FromHours(1), Window = 100_000, MinLabels = 100, Raise = 0.15, Clear = 0.05 },
            new() { Name = "count", Metric = Driftline.Core.Alerts.AlertMetric.CalibrationGap, Window = 10_000, MinLabels = 100, Raise = 0.15, Clear = 0.05 },
        ];
        var sink = new RecordingSink();
        var engine = new ScoringEngine(options, sink);
        var start = new DateTime(2026, 5, 1, 0, 0, 0, DateTimeKind.Utc);
        var lines = new List<string>();
        for (int i = 0; i < 6_000; i++)
        {
            var t = start.AddSeconds(i * 6);
            lines.Add($"{{\"id\":\"a{i}\",\"p\":0.5,\"label\":{i % 2},\"time\":\"{t:O}\"}}");
        }
        for (int i = 0; i < 300; i++)
        {
            var t = start.AddHours(10).AddSeconds(i * 6);
            lines.Add($"{{\"id\":\"b{i}\",\"p\":0.5,\"label\":1,\"time\":\"{t:O}\"}}");
        }
        EngineDriver.Feed(engine, lines);
        var raised = Assert.Single(sink.Alerts);
        Assert.Equal("hour", raised.Rule);
        // The hour window holds the last 600 labels, not all 6,300.
        var saved = engine.Snapshot().TimeWindows.Single();
        Assert.InRange(saved.Model.Length, 590, 610);
    }
}
