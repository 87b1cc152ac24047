using System.Globalization;
using System.Text.Json;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>
/// The multiclass measures on a fixed vector against Reference/multiclass_metrics.json, made by
/// Reference/multiclass_metrics.py with scikit-learn 1.2.1 (log_loss, brier_score_loss per class,
/// accuracy_score) and numpy 1.24.2 for the ECE definitions it cites.
/// </summary>
public sealed class MulticlassMeasuresReferenceTests
{
    private const string Source = "scikit-learn 1.2.1 via Reference/multiclass_metrics.json";

    [Fact]
    public void Measures_FixedVector_MatchScikitLearn()
    {
        using var json = JsonDocument.Parse(ReferenceData.ReadText("multiclass_metrics.json"));
        var root = json.RootElement;
        var classes = root.GetProperty("classes").EnumerateArray().Select(c => c.GetString()!).ToList();
        var options = new DriftlineOptions
        {
            Model = new ModelOptions { Classes = classes },
            Monitor = new MonitorOptions { Bins = 10, Window = 100, MetricsEvery = 1_000 },
            Alerts = [],
        };
        var engine = new ScoringEngine(options, new RecordingSink());
        var p = root.GetProperty("p").EnumerateArray().ToList();
        var y = root.GetProperty("y").EnumerateArray().Select(e => e.GetInt32()).ToList();
        var lines = p.Select((row, i) =>
            $"{{\"id\":\"r{i}\",\"p\":{{{string.Join(",", row.EnumerateArray().Select((v, k) => $"\"{classes[k]}\":{v.GetDouble().ToString("R", CultureInfo.InvariantCulture)}"))}}},\"label\":\"{classes[y[i]]}\"}}");
        EngineDriver.Feed(engine, lines);

        var total = engine.Measures(total: true);
        Assert.True(Math.Abs(root.GetProperty("log_loss").GetDouble() - total.LogLoss) < 1e-9, Source);
        Assert.True(Math.Abs(root.GetProperty("brier_sum").GetDouble() - total.Brier) < 1e-9, Source);
        Assert.True(Math.Abs(root.GetProperty("top_label_ece").GetDouble() - total.Ece) < 1e-9, Source);
        Assert.True(Math.Abs(root.GetProperty("accuracy").GetDouble() - total.MeanY) < 1e-12, Source);
        Assert.True(Math.Abs(root.GetProperty("mean_confidence").GetDouble() - total.MeanP) < 1e-9, Source);
        Assert.True(Math.Abs(root.GetProperty("classwise_ece").GetDouble() - engine.ClassWiseEce(total: true)) < 1e-9, Source);
        var perClass = engine.ClassMeasuresOf(total: true);
        var meanP = root.GetProperty("mean_p").EnumerateArray().Select(e => e.GetDouble()).ToList();
        var observed = root.GetProperty("observed_rate").EnumerateArray().Select(e => e.GetDouble()).ToList();
        for (int k = 0; k < classes.Count; k++)
        {
            Assert.Equal(classes[k], perClass[k].Name);
            Assert.True(Math.Abs(meanP[k] - perClass[k].MeanP) < 1e-9, Source);
            Assert.True(Math.Abs(observed[k] - perClass[k].ObservedRate) < 1e-12, Source);
        }
    }
}
