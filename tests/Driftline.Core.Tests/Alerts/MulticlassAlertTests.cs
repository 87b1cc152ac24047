using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Alerts;

/// <summary>Alerts of a multiclass model: calibration per class, one against the rest (issue 10).</summary>
public sealed class MulticlassAlertTests
{
    [Fact]
    public void DefaultRules_OneClassBreak_RaiseAlertsNamingThatClassAndNothingBefore()
    {
        // A stationary stream from a known softmax model, then +1 on the margin of 'late'
        // (its log-odds against the base class): the default rules are quiet before the break
        // and the alerts raised after it name the class.
        var options = new DriftlineOptions { Model = new ModelOptions { Classes = [.. SoftmaxStream.Classes] } };
        var sink = new RecordingSink();
        var engine = new ScoringEngine(options, sink);
        var stream = new SoftmaxStream(11);
        const int breakAt = 40_000;
        for (int i = 0; i < breakAt + 8_000; i++)
        {
            stream.Shift = i < breakAt ? 0 : 1;
            EngineDriver.Feed(engine, [stream.Next(i).Json]);
        }
        Assert.All(sink.Alerts, a => Assert.True(a.Labels > breakAt, $"{a.Rule} {a.Class} at label {a.Labels}: {RecordJson.Describe(a)}"));
        var raised = sink.Alerts.Where(a => a.Raised).ToList();
        Assert.NotEmpty(raised);
        Assert.Contains(raised, a => a.Rule == "calibration-drift" && a.Class == "late");
        var first = raised[0];
        Assert.Equal("late", first.Class);
        // Measured: the sequential test on 'late' raised 87 labels after the break (seed 11).
        Assert.InRange(first.Labels, breakAt + 1, breakAt + 1_000);
        Assert.Contains("class 'late'", RecordJson.Describe(first), StringComparison.Ordinal);
        Assert.Contains("Class 'late' under-predicted: predicted", RecordJson.Describe(first), StringComparison.Ordinal);
    }

    [Fact]
    public void PerClassRules_SequentialTest_SplitsTheFalseAlarmBudgetOverTheClasses()
    {
        // Bonferroni: K tests at ARL0 × K each keep at most one false alarm per ARL0 labels for
        // the model, so each class's threshold is ln(K × ARL0 × alternatives).
        var options = new DriftlineOptions { Model = new ModelOptions { Classes = [.. SoftmaxStream.Classes] } };
        var engine = new ScoringEngine(options, new RecordingSink());
        var binary = new ScoringEngine(new DriftlineOptions(), new RecordingSink());
        double binaryThreshold = binary.Rules.Single(r => r.Cusum is not null).Cusum!.Threshold;
        var perClass = engine.Channels.Skip(1).Select(c => c.Rules.Single(r => r.Rule.Cusum is not null).Rule.Cusum!.Threshold).ToList();
        Assert.Equal(4, perClass.Count);
        Assert.All(perClass, t => Assert.Equal(binaryThreshold + Math.Log(4), t, 12));
        // The whole-model rule (log-loss against the prior) runs once, on the whole model.
        Assert.Equal(["worse-than-prior"], engine.Channels[0].Rules.Select(r => r.Rule.Options.Name));
    }
}
