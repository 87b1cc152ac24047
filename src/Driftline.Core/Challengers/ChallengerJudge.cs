using Driftline.Core.Alerts;
using Driftline.Core.Scoring;

namespace Driftline.Core.Challengers;

/// <summary>
/// Judges one challenger configuration against the champion on the same stream: pairs their
/// per-label log-losses in grading order (both engines grade the same labels in the same order)
/// and runs a <see cref="PairedLossTest"/> on the differences. Each time the challenger is
/// declared better, a <c>challenger-better</c> line is made for the champion's alerts.
/// </summary>
internal sealed class ChallengerJudge
{
    /// <summary>Rule name of the line written when a challenger is declared better.</summary>
    public const string RuleName = "challenger-better";

    private readonly Queue<GradedLabel> _champion = new();
    private readonly Queue<double> _challenger = new();
    private readonly PairedLossTest _test;
    private readonly Action<AlertTransition> _declare;

    /// <summary>Judges the challenger named <paramref name="name"/>; decisions go to <paramref name="declare"/>.</summary>
    public ChallengerJudge(string name, ChallengerOptions options, Action<AlertTransition> declare)
    {
        ArgumentNullException.ThrowIfNull(options);
        Name = name;
        _test = new PairedLossTest(options);
        _declare = declare;
    }

    /// <summary>The challenger's configuration name.</summary>
    public string Name { get; }

    /// <summary>Labels paired so far.</summary>
    public long Paired { get; private set; }

    /// <summary>The champion's mean log-loss over the paired labels.</summary>
    public double ChampionLogLoss => Paired > 0 ? _championSum / Paired : double.NaN;

    /// <summary>The challenger's mean log-loss over the paired labels.</summary>
    public double ChallengerLogLoss => Paired > 0 ? _challengerSum / Paired : double.NaN;

    /// <summary>The evidence now (log of the betting wealth since the last decision).</summary>
    public double Evidence => _test.LogWealth;

    /// <summary>The level the evidence must reach, ln(1/ErrorRate).</summary>
    public double Threshold => _test.Threshold;

    /// <summary>Paired labels at which the challenger was declared better, in order.</summary>
    public List<long> DecidedAt { get; } = [];

    private double _championSum;
    private double _challengerSum;

    /// <summary>The champion graded a label.</summary>
    public void Champion(GradedLabel label)
    {
        _champion.Enqueue(label);
        Pair();
    }

    /// <summary>The challenger graded a label.</summary>
    public void Challenger(GradedLabel label)
    {
        _challenger.Enqueue(label.LogLoss);
        Pair();
    }

    private void Pair()
    {
        while (_champion.Count > 0 && _challenger.Count > 0)
        {
            var champion = _champion.Dequeue();
            double challenger = _challenger.Dequeue();
            Paired++;
            _championSum += champion.LogLoss;
            _challengerSum += challenger;
            double evidence = _test.LogWealth;
            if (_test.Add(champion.LogLoss, challenger))
            {
                DecidedAt.Add(Paired);
                _declare(new AlertTransition(RuleName, true, AlertMetric.ChallengerEvidence, Math.Max(evidence, _test.Threshold), _test.Threshold,
                    (int)Math.Min(int.MaxValue, Paired), champion.Id, champion.TimeTicks, Paired, AlertSeverity.Warning,
                    Break: $"challenger '{Name}' has lower log-loss than the champion: mean difference {_test.MeanDifference:0.0000} nats a label over the recent labels ({ChallengerLogLoss:0.0000} against {ChampionLogLoss:0.0000} over all {Paired:N0} paired)"));
            }
        }
    }
}
