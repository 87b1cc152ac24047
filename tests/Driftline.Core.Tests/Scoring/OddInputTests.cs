using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Snapshots;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

/// <summary>Valid but odd streams, each handled on purpose (issue 12, items 3 and 4).</summary>
public sealed class OddInputTests
{
    private static DriftlineOptions Options() => new()
    {
        Model = new ModelOptions { HashBits = 12 },
        Monitor = new MonitorOptions { Window = 100, MetricsEvery = 50 },
        Alerts = [],
    };

    private static string At(DateTime t) => t.ToString("yyyy-MM-ddTHH:mm:ssZ", System.Globalization.CultureInfo.InvariantCulture);

    [Fact]
    public void Process_InlineLabelThenLateLabel_CountsADuplicateEvenAfterARestore()
    {
        var engine = new ScoringEngine(Options(), new RecordingSink());
        EngineDriver.Feed(engine, ["""{"id":"a","features":{"x":1},"label":1}""", """{"id":"m","p":0.3,"label":0}"""]);
        using var saved = new MemoryStream();
        SnapshotCodec.Write(engine.Snapshot(), saved);
        saved.Position = 0;
        var restored = ScoringEngine.Restore(SnapshotCodec.Read(saved), new RecordingSink());

        foreach (var e in new[] { engine, restored })
        {
            var outcomes = EngineDriver.Feed(e, ["""{"id":"a","label":0}""", """{"id":"m","label":1}"""]);
            Assert.Equal([StepOutcome.DuplicateLabel, StepOutcome.DuplicateLabel], outcomes);
            Assert.Equal((2, 0), (e.Counters.DuplicateLabels, e.Counters.UnknownLabels));
            Assert.Equal(0, e.Pending.Waiting);
        }
    }

    [Fact]
    public void Process_SecondEventWithAWaitingId_IsRefusedWithAReasonAndTheFirstStaysGradeable()
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(Options(), sink);
        var outcomes = EngineDriver.Feed(engine,
            ["""{"id":"a","features":{"x":1}}""", """{"id":"a","features":{"x":5}}""", """{"id":"a","p":0.2}""", """{"id":"a","label":1}"""]);
        Assert.Equal([StepOutcome.Scored, StepOutcome.Rejected, StepOutcome.Rejected, StepOutcome.LateLabelJoined], outcomes);
        Assert.Contains("id 'a' already has a prediction waiting", engine.RejectReason, StringComparison.Ordinal);
        Assert.Single(sink.Predictions);
        Assert.Equal((0, 2), (engine.Pending.Expired, engine.Counters.Rejected));
        // Once graded, the id may be used again.
        Assert.Equal([StepOutcome.Scored], EngineDriver.Feed(engine, ["""{"id":"a","features":{"x":2}}"""]));
    }

    [Fact]
    public void Process_OneEventDatedFarAhead_MovesTheClockByMaxClockSkewOnlyAndExpiresNothing()
    {
        // The demo's failure: one event dated 9999-12-31 aged out every waiting prediction.
        var engine = new ScoringEngine(Options(), new RecordingSink());
        var start = new DateTime(2026, 3, 4, 18, 0, 0, DateTimeKind.Utc);
        var lines = Enumerable.Range(0, 100).Select(i => "{\"id\":\"w" + i + "\",\"time\":\"" + At(start.AddMinutes(i)) + "\",\"features\":{\"x\":" + i % 5 + "}}").ToList();
        lines.Add("""{"id":"far","time":"9999-12-31T23:59:59Z","features":{"x":1}}""");
        lines.AddRange(Enumerable.Range(0, 100).Select(i => $$"""{"id":"w{{i}}","time":"{{At(start.AddMinutes(100 + i))}}","label":{{i % 2}}}"""));
        var outcomes = EngineDriver.Feed(engine, lines);

        Assert.Equal(100, outcomes.Count(o => o == StepOutcome.LateLabelJoined));
        Assert.Equal(0, engine.Pending.Expired);
        Assert.Equal(1, engine.Counters.ClampedTimes);
        Assert.Equal(start.AddMinutes(99).AddDays(1).Ticks, engine.ClockTicks);
    }

    [Fact]
    public void Process_GapLongerThanTheSkew_IsCaughtUpBySteps()
    {
        // A stream resuming after three days: the clock follows it a day per event.
        var engine = new ScoringEngine(Options(), new RecordingSink());
        var start = new DateTime(2026, 3, 4, 0, 0, 0, DateTimeKind.Utc);
        EngineDriver.Feed(engine, Enumerable.Range(0, 5).Select(i => "{\"id\":\"g" + i + "\",\"time\":\"" + At(start.AddDays(i == 0 ? 0 : 3)) + "\",\"features\":{\"x\":1},\"label\":1}"));
        Assert.Equal(start.AddDays(3).Ticks, engine.ClockTicks);
        Assert.Equal(2, engine.Counters.ClampedTimes);
    }

    [Fact]
    public void Validate_NonPositiveMaxClockSkew_NamesTheOption()
    {
        var options = Options();
        options.Labels.MaxClockSkew = TimeSpan.Zero;
        var error = Assert.Single(options.Validate());
        Assert.Equal("Labels:MaxClockSkew", error.Option);
    }
}
