using System.Globalization;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Alerts;

/// <summary>
/// Alert fatigue: one sustained break must read as one incident, not a raise and clear every few
/// thousand labels. The stream is generated here from a known model: an external model whose
/// stated log-odds are twice the true ones (over-confident) for 40,000 labels.
/// </summary>
public sealed class SustainedBreakTests
{
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void DefaultRules_SustainedSlopeBreak_EachRuleRaisesAtMostTwice(int seed)
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(new DriftlineOptions(), sink);

        EngineDriver.Feed(engine, Stream(seed, calibrated: 5_000, broken: 40_000));

        foreach (var rule in new[] { "calibration-gap", "calibration-drift", "worse-than-prior" })
        {
            int raises = sink.Alerts.Count(a => a.Rule == rule && a.Raised);
            Assert.True(raises <= 2, $"{rule} raised {raises} times through one sustained break");
        }
        // The break is found: the critical test raises, as before.
        Assert.Contains(sink.Alerts, a => a.Rule == "calibration-drift" && a.Raised);
    }

    [Fact]
    public void DefaultRules_SustainedSlopeBreak_EveryAlertInOneIncident()
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(new DriftlineOptions(), sink);

        EngineDriver.Feed(engine, Stream(5, calibrated: 5_000, broken: 40_000));

        Assert.NotEmpty(sink.Alerts);
        // While a rule is raised, a raise of another joins its incident.
        Assert.True(sink.Alerts.Count(a => a.Raised) > 1, "the break should be seen by more than one rule");
        Assert.All(sink.Alerts, a => Assert.Equal(1, a.Incident));
        Assert.Equal(1, engine.Counters.Incidents);
    }

    [Fact]
    public void DefaultRules_TwoBreaksApart_TwoIncidents()
    {
        var sink = new RecordingSink();
        var engine = new ScoringEngine(new DriftlineOptions(), sink);

        EngineDriver.Feed(engine, Stream(6, calibrated: 5_000, broken: 10_000)
            .Concat(Stream(7, calibrated: 30_000, broken: 10_000).Select(l => l.Replace("\"o-", "\"b-", StringComparison.Ordinal))));

        Assert.Equal(2, engine.Counters.Incidents);
        Assert.Equal([1L, 2L], sink.Alerts.Select(a => a.Incident).Distinct().Order().ToArray());
        // Nothing of the second break is filed under the first.
        long firstOfSecond = sink.Alerts.First(a => a.Incident == 2).Labels;
        Assert.All(sink.Alerts.Where(a => a.Labels >= firstOfSecond), a => Assert.Equal(2, a.Incident));
    }

    [Fact]
    public void DefaultRules_SustainedSlopeBreak_GapRaisedAsEarlyAsWithoutHold()
    {
        // The hold applies to clears only, so the first raise comes at the same label as with
        // ClearHoldLabels = 0 (the detection delay is unchanged).
        var held = new RecordingSink();
        EngineDriver.Feed(new ScoringEngine(new DriftlineOptions(), held), Stream(4, 5_000, 20_000));
        var options = new DriftlineOptions { Alerts = AlertRuleOptionsWithoutHold() };
        var unheld = new RecordingSink();
        EngineDriver.Feed(new ScoringEngine(options, unheld), Stream(4, 5_000, 20_000));

        long First(RecordingSink s) => s.Alerts.First(a => a.Rule == "calibration-gap" && a.Raised).Labels;
        Assert.Equal(First(unheld), First(held));
    }

    private static List<Driftline.Core.Alerts.AlertRuleOptions> AlertRuleOptionsWithoutHold()
    {
        var rules = Driftline.Core.Alerts.AlertRuleOptions.Defaults();
        foreach (var rule in rules)
        {
            rule.ClearHoldLabels = 0;
        }
        return rules;
    }

    private static IEnumerable<string> Stream(int seed, int calibrated, int broken)
    {
        var rng = new Random(seed);
        var c = CultureInfo.InvariantCulture;
        for (int i = 0; i < calibrated + broken; i++)
        {
            double trueLogOdds = -0.85 + 1.2 * Normal(rng);
            // In the break the model states twice the true log-odds: over-confident.
            double stated = i < calibrated ? trueLogOdds : 2 * trueLogOdds;
            double p = 1 / (1 + Math.Exp(-stated));
            int y = rng.NextDouble() < 1 / (1 + Math.Exp(-trueLogOdds)) ? 1 : 0;
            yield return $"{{\"id\":\"o-{i}\",\"p\":{p.ToString("R", c)},\"label\":{y}}}";
        }
    }

    private static double Normal(Random rng) => Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
}
