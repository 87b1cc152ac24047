using System.Globalization;
using Driftline.Core.Options;
using Driftline.Core.Recalibration;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Recalibration;

/// <summary>
/// The correction wired into the engine, on a monitor stream generated here from a known model:
/// an external model that is calibrated, then under-predicts by 0.4 in log-odds.
/// </summary>
public sealed class RecalibrationEngineTests
{
    private const int Calm = 10_000;
    private const int Broken = 15_000;

    [Fact]
    public void Monitor_AfterUnderPredictionBreak_ServedStreamCalibratedWhileAlertsWatchRaw()
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(Options(RecalibrationMode.Always), sink);
        var (lines, labels, _) = Stream(21);

        EngineDriver.Feed(engine, lines);

        // Every record's served probability goes out as a prediction, with the raw one beside it.
        Assert.Equal(lines.Count, sink.Predictions.Count);
        double served = 0, raw = 0;
        for (int i = Calm; i < Calm + Broken; i++)
        {
            served += sink.Predictions[i].P - labels[i];
            raw += sink.Predictions[i].Raw - labels[i];
        }
        Assert.True(Math.Abs(served / Broken) <= 0.01, $"served mean p - mean y is {served / Broken:F4}");
        Assert.True(Math.Abs(raw / Broken) >= 0.05, $"raw is {raw / Broken:F4}");
        // The rules still watch the raw model, which is still broken, so they say so.
        Assert.Contains(sink.Alerts, a => a.Rule == "calibration-drift" && a.Raised);
        Assert.True(engine.ServedMeasures(total: true)!.Value.LogLoss < engine.Totals.Current.LogLoss);
    }

    [Fact]
    public void Monitor_ServedProbability_UsesOnlyEarlierLabels()
    {
        var sink = new RecordingSink();
        var options = Options(RecalibrationMode.Always);
        var engine = new ScoringEngine(options, sink);
        var (lines, labels, raws) = Stream(22);

        EngineDriver.Feed(engine, lines);

        // The same correction, fed by hand: served for record i, then learn from record i.
        var alone = new LogOddsRecalibration(options.Recalibration);
        for (int i = 0; i < lines.Count; i++)
        {
            Assert.Equal(alone.Apply(raws[i]), sink.Predictions[i].P);
            alone.Learn(raws[i], labels[i]);
        }
    }

    [Fact]
    public void Snapshot_MidStream_ContinuesExactly()
    {
        var options = Options(RecalibrationMode.Always);
        var (lines, _, _) = Stream(23);
        var whole = new RecordingSink();
        EngineDriver.Feed(new ScoringEngine(options, whole), lines);

        var first = new RecordingSink();
        var engine = new ScoringEngine(options, first);
        EngineDriver.Feed(engine, lines.Take(12_000));
        var second = new RecordingSink();
        using var saved = new MemoryStream();
        Snapshots.SnapshotCodec.Write(engine.Snapshot(), saved);
        saved.Position = 0;
        var restored = ScoringEngine.Restore(Snapshots.SnapshotCodec.Read(saved), second);
        EngineDriver.Feed(restored, lines.Skip(12_000));

        Assert.Equal(whole.Predictions.Select(p => p.P), first.Predictions.Concat(second.Predictions).Select(p => p.P));
        Assert.Equal(engine.Models[0].Recalibration!.Labels + 13_000, restored.Models[0].Recalibration!.Labels);
    }

    [Fact]
    public void Monitor_OnAlert_ServesRawUntilACalibrationRuleRaises()
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(Options(RecalibrationMode.OnAlert), sink);
        var (lines, _, _) = Stream(24);

        EngineDriver.Feed(engine, lines);

        long firstRaise = sink.Alerts.First(a => a.Raised).Labels;
        Assert.All(sink.Predictions.Take((int)firstRaise), p => Assert.Equal(p.Raw, p.P));
        Assert.Contains(sink.Predictions.Skip((int)firstRaise + 1), p => p.P != p.Raw);
    }

    [Fact]
    public void Options_RecalibrationOnMulticlass_Accepted()
    {
        // Vector scaling serves multiclass models (MulticlassRecalibrationEngineTests).
        var options = new DriftlineOptions { Model = { Classes = ["on-time", "late", "failed"] }, Recalibration = { Mode = RecalibrationMode.Always } };
        Assert.Empty(options.Validate());
    }

    private static DriftlineOptions Options(RecalibrationMode mode) => new() { Recalibration = { Mode = mode } };

    private static (List<string> Lines, int[] Labels, double[] Raw) Stream(int seed)
    {
        var rng = new Random(seed);
        var c = CultureInfo.InvariantCulture;
        var lines = new List<string>();
        var labels = new int[Calm + Broken];
        var raws = new double[Calm + Broken];
        for (int i = 0; i < Calm + Broken; i++)
        {
            double z = -0.8 + 1.4 * Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
            double p = Math.Round(1 / (1 + Math.Exp(-z)), 6);
            double shift = i < Calm ? 0 : 0.4;
            int y = rng.NextDouble() < 1 / (1 + Math.Exp(-(z + shift))) ? 1 : 0;
            labels[i] = y;
            raws[i] = p;
            lines.Add($"{{\"id\":\"o-{i}\",\"p\":{p.ToString("R", c)},\"label\":{y}}}");
        }
        return (lines, labels, raws);
    }
}
