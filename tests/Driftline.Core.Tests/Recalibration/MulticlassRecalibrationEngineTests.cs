using System.Globalization;
using Driftline.Core.Options;
using Driftline.Core.Recalibration;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Recalibration;

/// <summary>
/// Vector scaling wired into the engine, on monitor streams of p objects generated here from a
/// known 3-class model: calibrated, then broken (over-confident, or shifted towards one class).
/// </summary>
public sealed class MulticlassRecalibrationEngineTests
{
    private static readonly string[] Classes = ["on-time", "late", "failed"];
    private const int Calm = 10_000;
    private const int Broken = 15_000;
    private const int BurnIn = 1_000;

    [Theory]
    [InlineData(0.5, 0.0)]
    [InlineData(1.0, 0.8)]
    public void Monitor_AfterBreak_ServedLogLossWithin001OfTruthWhileAlertsWatchRaw(double temperature, double shift)
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(Options(), sink);
        var stream = Stream(31, temperature, shift, lateEvery: 0);

        EngineDriver.Feed(engine, stream.Lines);

        // Every record's served class probabilities go out as a prediction, the raw ones beside.
        Assert.Equal(stream.Lines.Count, sink.Predictions.Count);
        Assert.All(sink.Predictions, p => Assert.NotNull(p.RawClasses));
        // Burn-in: 1,000 labels (two half-lives) after the break before measuring.
        double served = 0, raw = 0, truth = 0;
        for (int i = Calm + BurnIn; i < Calm + Broken; i++)
        {
            int y = stream.Labels[i];
            served += -Math.Log(sink.Predictions[i].Classes![y]);
            raw += -Math.Log(sink.Predictions[i].RawClasses![y]);
            truth += -Math.Log(stream.Truth[i][y]);
        }
        int n = Broken - BurnIn;
        Assert.True((served - truth) / n <= 0.01, $"served log-loss is {(served - truth) / n:F4} above the true model's");
        Assert.True((raw - truth) / n > 0.03, $"the break should hurt the raw stream ({(raw - truth) / n:F4})");
        // The rules still watch the raw model, which is still broken, so they say so.
        Assert.Contains(sink.Alerts, a => a.Raised);
        var servedTotal = engine.ServedMeasures(total: true)!.Value;
        var rawTotal = engine.Measures(total: true);
        Assert.True(servedTotal.LogLoss < rawTotal.LogLoss);
        Assert.True(servedTotal.Brier < rawTotal.Brier);
        Assert.True(Math.Abs(servedTotal.CalibrationInTheLarge) < Math.Abs(rawTotal.CalibrationInTheLarge));
    }

    [Fact]
    public void Monitor_CalibratedStream_ServedLogLossWithin0002OfRaw()
    {
        var engine = new ScoringEngine(Options(), new RecordingSink());
        var stream = Stream(32, temperature: 1, shift: 0, lateEvery: 0, calm: 40_000, broken: 0);

        EngineDriver.Feed(engine, stream.Lines);

        double cost = engine.ServedMeasures(total: true)!.Value.LogLoss - engine.Measures(total: true).LogLoss;
        Assert.True(cost <= 0.002, $"served log-loss exceeds raw by {cost:F5}");
    }

    [Fact]
    public void Snapshot_MidStreamWithLateLabels_ContinuesExactly()
    {
        var options = Options();
        var stream = Stream(33, temperature: 0.6, shift: 0.4, lateEvery: 3);
        var whole = new RecordingSink();
        var reference = new ScoringEngine(options, whole);
        EngineDriver.Feed(reference, stream.Lines);

        var first = new RecordingSink();
        var engine = new ScoringEngine(options, first);
        int cut = stream.Lines.Count / 2 + 1;
        EngineDriver.Feed(engine, stream.Lines.Take(cut));
        Assert.True(engine.Pending.Waiting > 0, "the cut should leave labels waiting");
        using var saved = new MemoryStream();
        Snapshots.SnapshotCodec.Write(engine.Snapshot(), saved);
        saved.Position = 0;
        var second = new RecordingSink();
        var restored = ScoringEngine.Restore(Snapshots.SnapshotCodec.Read(saved), second);
        EngineDriver.Feed(restored, stream.Lines.Skip(cut));

        var joined = first.Predictions.Concat(second.Predictions).ToList();
        Assert.Equal(whole.Predictions.Count, joined.Count);
        for (int i = 0; i < joined.Count; i++)
        {
            Assert.Equal(whole.Predictions[i].Classes, joined[i].Classes);
            Assert.Equal(whole.Predictions[i].RawClasses, joined[i].RawClasses);
        }
        Assert.Equal(reference.ServedMeasures(true), restored.ServedMeasures(true));
        Assert.Equal(reference.ServedMeasures(false), restored.ServedMeasures(false));
        var (a, b) = (reference.Models[0].Recalibration!.Export(), restored.Models[0].Recalibration!.Export());
        Assert.Equal(a.Intercepts, b.Intercepts);
        Assert.Equal(a.Slopes, b.Slopes);
        Assert.Equal(a.Curvature, b.Curvature);
    }

    [Fact]
    public void Snapshot_DamagedVectorScalingState_RefusedByValidator()
    {
        var engine = new ScoringEngine(Options(), new RecordingSink());
        EngineDriver.Feed(engine, Stream(34, 1, 0, 0, calm: 300, broken: 0).Lines);
        var snapshot = engine.Snapshot();
        snapshot.Models[0].Recalibration = snapshot.Models[0].Recalibration! with { Slopes = [1, 1] };

        var error = Assert.Throws<InvalidDataException>(() => Snapshots.SnapshotValidator.Check(snapshot));
        Assert.Contains("recalibration", error.Message);
    }

    private static DriftlineOptions Options() => new() { Model = { Classes = [.. Classes] }, Recalibration = { Mode = RecalibrationMode.Always } };

    private sealed record Generated(List<string> Lines, int[] Labels, double[][] Truth);

    // A 3-class model's probabilities, softmax of scores ~ N(μ_k, 1.3²); outcomes from the truth,
    // softmax(ln p) while calm, softmax(temperature · ln p + shift · [k = late]) after the break.
    // With lateEvery > 0, every lateEvery-th record comes without its label, which follows 50
    // records later.
    private static Generated Stream(int seed, double temperature, double shift, int lateEvery, int calm = Calm, int broken = Broken)
    {
        double[] means = [0.4, 0.0, -0.4];
        var rng = new Random(seed);
        var c = CultureInfo.InvariantCulture;
        var lines = new List<string>();
        int n = calm + broken;
        var labels = new int[n];
        var truths = new double[n][];
        var late = new SortedDictionary<int, List<string>>();
        for (int i = 0; i < n; i++)
        {
            var p = new double[3];
            for (int k = 0; k < 3; k++)
            {
                p[k] = means[k] + 1.3 * Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
            }
            Softmax(p);
            bool calmNow = i < calm;
            var truth = new double[3];
            for (int k = 0; k < 3; k++)
            {
                truth[k] = (calmNow ? 1 : temperature) * Math.Log(p[k]) + (!calmNow && k == 1 ? shift : 0);
            }
            Softmax(truth);
            double r = rng.NextDouble();
            int y = r < truth[0] ? 0 : r < truth[0] + truth[1] ? 1 : 2;
            labels[i] = y;
            truths[i] = truth;
            string pObject = "{" + string.Join(",", Enumerable.Range(0, 3).Select(k => $"\"{Classes[k]}\":{p[k].ToString("R", c)}")) + "}";
            if (lateEvery > 0 && i % lateEvery == 0)
            {
                lines.Add($"{{\"id\":\"d-{i}\",\"p\":{pObject}}}");
                (late.TryGetValue(i + 50, out var list) ? list : late[i + 50] = []).Add($"{{\"id\":\"d-{i}\",\"label\":\"{Classes[y]}\"}}");
            }
            else
            {
                lines.Add($"{{\"id\":\"d-{i}\",\"p\":{pObject},\"label\":\"{Classes[y]}\"}}");
            }
            if (late.Remove(i, out var due))
            {
                lines.AddRange(due);
            }
        }
        lines.AddRange(late.Values.SelectMany(v => v));
        return new Generated(lines, labels, truths);
    }

    private static void Softmax(double[] z)
    {
        double max = z.Max();
        double sum = 0;
        for (int k = 0; k < z.Length; k++)
        {
            z[k] = Math.Exp(z[k] - max);
            sum += z[k];
        }
        for (int k = 0; k < z.Length; k++)
        {
            z[k] /= sum;
        }
    }
}
