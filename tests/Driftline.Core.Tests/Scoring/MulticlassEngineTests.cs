using System.Text;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Snapshots;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

/// <summary>A model with <c>Model:Classes</c>: one softmax model scored, graded and learned like a binary one (issue 10).</summary>
public sealed class MulticlassEngineTests
{
    private static DriftlineOptions Options(LearnerKind learner = LearnerKind.AdaGrad, double halfLife = 5_000) => new()
    {
        Model = new ModelOptions { HashBits = 12, Classes = [.. SoftmaxStream.Classes], Learner = learner, HalfLifeLabels = halfLife },
        Monitor = new MonitorOptions { Window = 500, MetricsEvery = 250 },
        Alerts = [],
    };

    [Fact]
    public void Process_UntrainedModel_PredictsUniformClassesSummingToOne()
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(Options(), sink);
        EngineDriver.Feed(engine, [new SoftmaxStream(1).Next(0, withLabel: false).Json]);
        var p = Assert.Single(sink.Predictions);
        Assert.True(double.IsNaN(p.P));
        Assert.Equal(SoftmaxStream.Classes, p.ClassNames);
        Assert.All(p.Classes!, q => Assert.Equal(0.25, q, 15));
    }

    [Fact]
    public void Process_InlineOrLateLabels_GiveTheSamePredictionsAndMeasures()
    {
        // Progressive validation holds for classes as for binary labels: a label never
        // influences its own event's score, whether it comes inline or later.
        var inline = new RecordingSink();
        var late = new RecordingSink();
        var a = new ScoringEngine(Options(), inline);
        var b = new ScoringEngine(Options(), late);
        var stream = new SoftmaxStream(2);
        for (int i = 0; i < 600; i++)
        {
            var e = stream.Next(i);
            EngineDriver.Feed(a, [e.Json]);
            string label = $",\"label\":\"{SoftmaxStream.Classes[e.Label]}\"";
            EngineDriver.Feed(b, [e.Json.Replace(label, "", StringComparison.Ordinal), $"{{\"id\":\"e{i}\",\"label\":\"{SoftmaxStream.Classes[e.Label]}\"}}"]);
        }
        Assert.Equal(inline.Predictions.SelectMany(p => p.Classes!), late.Predictions.SelectMany(p => p.Classes!));
        Assert.All(inline.Predictions, p => Assert.Equal(1, p.Classes!.Sum(), 12));
        Assert.Equal(a.Totals.Current, b.Totals.Current);
        Assert.Equal(600, a.Counters.InlineLabels);
        Assert.Equal(600, b.Counters.LateLabels);
    }

    [Fact]
    public void Process_LateLabels_JoinDuplicatesAndUnknownIdsAsForBinary()
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(Options(), sink);
        var outcomes = EngineDriver.Feed(engine,
            ["""{"id":"o-1","features":{"zone":"north"}}""", """{"id":"o-1","label":"late"}""", """{"id":"o-1","label":"failed"}""", """{"id":"nobody","label":"late"}"""]);
        Assert.Equal([StepOutcome.Scored, StepOutcome.LateLabelJoined, StepOutcome.DuplicateLabel, StepOutcome.UnknownLabel], outcomes);
        // The whole model is graded on the true class's probability: −ln 0.25 for the untrained model.
        Assert.Equal(Math.Log(4), engine.Totals.Current.LogLoss, 6);
        Assert.Equal(1, engine.Models[0].Prior.ClassCounts[1]);
        Assert.Equal(1, engine.Models[0].Learner.Updates);
    }

    [Fact]
    public void Process_ExpiredPrediction_IsNotGradedByItsLateLabel()
    {
        var options = Options();
        options.Labels.MaxAge = TimeSpan.FromMinutes(10);
        var engine = new ScoringEngine(options, new RecordingSink());
        var outcomes = EngineDriver.Feed(engine,
            ["""{"id":"o-1","time":"2026-03-04T10:00:00Z","features":{"zone":"north"}}""",
             """{"id":"o-2","time":"2026-03-04T11:00:00Z","features":{"zone":"north"}}""",
             """{"id":"o-1","label":"late"}"""]);
        Assert.Equal(StepOutcome.UnknownLabel, outcomes[^1]);
        Assert.Equal(1, engine.Pending.Expired);
    }

    [Theory]
    [InlineData("AdaGrad")]
    [InlineData("Ftrl")]
    public void Process_StationaryStream_LearnsTheTrueClassProbabilities(string learnerName)
    {
        var learner = Enum.Parse<LearnerKind>(learnerName);
        // Property of the method: on a stream from a known softmax model, the joint fit's
        // probabilities approach the true ones, and its progressive log-loss the truth's.
        var sink = new RecordingSink();
        var engine = new ScoringEngine(Options(learner, halfLife: 0), sink);
        var stream = new SoftmaxStream(3);
        double truthLoss = 0;
        double gap = 0;
        int n = 30_000, tail = 5_000;
        var rows = new List<double[]>();
        var labels = new List<int>();
        for (int i = 0; i < n; i++)
        {
            var e = stream.Next(i);
            rows.Add(e.Dense);
            labels.Add(e.Label);
            EngineDriver.Feed(engine, [e.Json]);
            truthLoss -= Math.Log(e.TrueP[e.Label]);
            if (i >= n - tail)
            {
                var p = sink.Predictions[^1].Classes!;
                gap += p.Zip(e.TrueP, (a, b) => Math.Abs(a - b)).Sum() / tail;
            }
        }
        Assert.True(gap < 0.06, $"mean total-variation gap to the true probabilities {gap:F4}");
        double modelLoss = engine.Totals.Current.LogLoss;
        Assert.InRange(modelLoss / (truthLoss / n), 1.0 - 0.02, 1.02);
        // The issue's check: within 2% of the batch optimum's in-sample log-loss, the joint
        // maximum-likelihood fit of the same rows (MultinomialNewtonFit, itself checked against
        // the published mnlogit of anes96).
        var batch = Core.Fitting.MultinomialNewtonFit.Fit(rows, labels, SoftmaxStream.Classes.Length);
        Assert.True(batch.Converged, batch.Problem);
        double batchLoss = -batch.LogLikelihood / n;
        Assert.InRange(modelLoss / batchLoss, 1.0, 1.02);
        Assert.True(engine.Totals.Current.LogLoss < engine.PriorTotals.Current.LogLoss);
    }

    [Fact]
    public void Process_Prior_IsLaplaceCorrectedClassFrequency()
    {
        // (n_k + 1) / (N + K): Laplace's rule of succession, a fact of the trade.
        var engine = new ScoringEngine(Options(), new RecordingSink());
        EngineDriver.Feed(engine, ["""{"id":"a","features":{"x":1},"label":"late"}""", """{"id":"b","features":{"x":1},"label":"late"}""", """{"id":"c","features":{"x":1},"label":"failed"}"""]);
        var prior = new double[4];
        engine.Models[0].Prior.Predict(prior);
        Assert.Equal([1.0 / 7, 3.0 / 7, 2.0 / 7, 1.0 / 7], prior);
    }

    [Fact]
    public void Restore_FromSnapshotMidStream_ContinuesExactlyAsAnUninterruptedRun()
    {
        var options = Options();
        options.Alerts = null;
        var stream = new SoftmaxStream(4);
        var lines = new List<string>();
        for (int i = 0; i < 3_000; i++)
        {
            var e = stream.Next(i, withLabel: i % 3 != 0);
            lines.Add(e.Json);
            if (i % 3 == 0 && i > 30)
            {
                lines.Add($"{{\"id\":\"e{i - 30}\",\"label\":\"{SoftmaxStream.Classes[e.Label]}\"}}");
            }
        }
        var whole = new RecordingSink();
        var uninterrupted = new ScoringEngine(options, whole);
        EngineDriver.Feed(uninterrupted, lines);

        var first = new RecordingSink();
        var before = new ScoringEngine(options, first);
        EngineDriver.Feed(before, lines.Take(1_700));
        using var saved = new MemoryStream();
        SnapshotCodec.Write(before.Snapshot(), saved);
        saved.Position = 0;
        var second = new RecordingSink();
        var after = ScoringEngine.Restore(SnapshotCodec.Read(saved), second);
        EngineDriver.Feed(after, lines.Skip(1_700));

        Assert.Equal(whole.Predictions.Skip(first.Predictions.Count).SelectMany(p => p.Classes!), second.Predictions.SelectMany(p => p.Classes!));
        Assert.Equal(Json(uninterrupted.Snapshot()), Json(after.Snapshot()));
        Assert.Equal(4, after.Snapshot().Classes!.Count);

        static string Json(EngineSnapshot snapshot)
        {
            using var buffer = new MemoryStream();
            SnapshotCodec.Write(snapshot, buffer);
            return Encoding.UTF8.GetString(buffer.ToArray());
        }
    }

    [Fact]
    public void WritePrediction_Multiclass_WritesPAsAnObjectInClassOrder()
    {
        var p = new Prediction("o-1", "default", double.NaN, 3, ParsedRecord.NoTime, [0.71, 0.22, 0.07], ["on-time", "late", "failed"]);
        using var buffer = new MemoryStream();
        using (var w = new System.Text.Json.Utf8JsonWriter(buffer))
        {
            RecordJson.WritePrediction(w, p);
        }
        Assert.Equal("""{"id":"o-1","key":"default","p":{"on-time":0.71,"late":0.22,"failed":0.07},"model_version":3}""", Encoding.UTF8.GetString(buffer.ToArray()));
    }

    [Fact]
    public void Validate_DamagedMulticlassSnapshot_IsRefusedNamingThePlace()
    {
        var engine = new ScoringEngine(Options(), new RecordingSink());
        EngineDriver.Feed(engine, [new SoftmaxStream(6).Next(0).Json, new SoftmaxStream(6).Next(1, withLabel: false).Json]);
        SnapshotValidator.Check(engine.Snapshot());

        var shortLearner = engine.Snapshot();
        shortLearner.Models[0].Learner.First = shortLearner.Models[0].Learner.First[..^1];
        var error = Assert.Throws<InvalidDataException>(() => SnapshotValidator.Check(shortLearner));
        Assert.Contains("(4 classes per slot)", error.Message, StringComparison.Ordinal);

        var badPrior = engine.Snapshot();
        badPrior.Models[0].PriorClassCounts = [1, 0, 0];
        Assert.StartsWith("models[0].prior_class_counts", Assert.Throws<InvalidDataException>(() => SnapshotValidator.Check(badPrior)).Message, StringComparison.Ordinal);

        var badPending = engine.Snapshot();
        badPending.Pending[0] = badPending.Pending[0] with { ClassP = [0.5, 0.5, 1.5, 0] };
        Assert.StartsWith("pending[0] class_p", Assert.Throws<InvalidDataException>(() => SnapshotValidator.Check(badPending)).Message, StringComparison.Ordinal);
    }
}
