using Driftline.Core.Alerts;
using Driftline.Core.Scoring;

namespace Driftline.Core.Challengers;

/// <summary>
/// Judges one challenger configuration against the champion on the same stream: pairs their
/// per-label log-losses by event id and runs a <see cref="PairedLossTest"/> on the differences.
/// Each time the challenger is declared better, a <c>challenger-better</c> line is made for the
/// champion's alerts.
/// </summary>
/// <remarks>
/// Two configurations need not grade the same labels: a smaller <c>Labels:MaxPending</c> or a
/// shorter <c>Labels:MaxAge</c> drops predictions the other still holds. A label is paired only
/// when both sides graded its id; one graded by one side alone waits for the other's (the
/// drivers run every configuration on a record before the next, so a pair forms within the
/// record) and is given up, counted in <see cref="Unpaired"/>, once <see cref="MaxWaiting"/>
/// later labels of that side have come.
/// </remarks>
internal sealed class ChallengerJudge
{
    /// <summary>Rule name of the line written when a challenger is declared better.</summary>
    public const string RuleName = "challenger-better";

    /// <summary>Labels of one side kept waiting for the other's: 1,024.</summary>
    public const int MaxWaiting = 1_024;

    private readonly WaitingSide _champion = new();
    private readonly WaitingSide _challenger = new();
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

    /// <summary>Labels only one side graded (so far): not paired, not in the test.</summary>
    public long Unpaired => _givenUp + _champion.Waiting + _challenger.Waiting;

    private long _givenUp;

    /// <summary>The champion's mean log-loss over the paired labels.</summary>
    public double ChampionLogLoss => Paired > 0 ? _championSum / Paired : double.NaN;

    /// <summary>The challenger's mean log-loss over the paired labels.</summary>
    public double ChallengerLogLoss => Paired > 0 ? _challengerSum / Paired : double.NaN;

    /// <summary>The evidence now (log of the betting wealth since the last decision).</summary>
    public double Evidence => _test.LogWealth;

    /// <summary>The level the evidence must reach, ln(1/ErrorRate).</summary>
    public double Threshold => _test.Threshold;

    /// <summary>Paired labels at which the challenger was declared better, in order.</summary>
    public List<long> DecidedAt { get; private set; } = [];

    /// <summary>Called after each pair with the champion's loss and the challenger's, e.g. to record the run over time; may be null.</summary>
    public Action<double, double>? AfterPair { get; set; }

    private double _championSum;
    private double _challengerSum;

    /// <summary>The champion graded a label.</summary>
    public void Champion(GradedLabel label)
    {
        if (_challenger.TryTake(label.Id) is { } other)
        {
            Pair(label.Id, label.TimeTicks, label.LogLoss, other.LogLoss);
        }
        else
        {
            _givenUp += _champion.Add(label);
        }
    }

    /// <summary>The challenger graded a label.</summary>
    public void Challenger(GradedLabel label)
    {
        if (_champion.TryTake(label.Id) is { } other)
        {
            Pair(label.Id, other.TimeTicks, other.LogLoss, label.LogLoss);
        }
        else
        {
            _givenUp += _challenger.Add(label);
        }
    }

    /// <summary>Starts the test afresh against a new champion: the evidence, the means and the labels waiting go; the decisions stay on record.</summary>
    public void Restart()
    {
        _test.Import(new PairedLossState(0, 0, 0, 0, 0, _test.Decisions));
        Paired = 0;
        _championSum = _challengerSum = 0;
        _champion.Clear();
        _challenger.Clear();
    }

    /// <summary>The state to checkpoint.</summary>
    public ChallengerJudgeState Export()
    {
        var (champion, championCount) = _champion.Export();
        var (challenger, challengerCount) = _challenger.Export();
        return new(_test.Export(), Paired, _givenUp, _championSum, _challengerSum, [.. DecidedAt], champion, championCount, challenger, challengerCount);
    }

    /// <summary>Restores a state written by <see cref="Export"/>.</summary>
    /// <exception cref="ArgumentException">A number is damaged.</exception>
    public void Import(ChallengerJudgeState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        if (state.Paired < 0 || state.GivenUp < 0 || !double.IsFinite(state.ChampionSum) || !double.IsFinite(state.ChallengerSum)
            || state.ChampionCount < 0 || state.ChallengerCount < 0 || state.DecidedAt is null || state.ChampionWaiting is null || state.ChallengerWaiting is null)
        {
            throw new ArgumentException("the challenger's judge state is damaged: counts must not be negative, sums finite, lists present", nameof(state));
        }
        _test.Import(state.Test);
        (Paired, _givenUp, _championSum, _challengerSum) = (state.Paired, state.GivenUp, state.ChampionSum, state.ChallengerSum);
        DecidedAt = [.. state.DecidedAt];
        _champion.Import(state.ChampionWaiting, state.ChampionCount);
        _challenger.Import(state.ChallengerWaiting, state.ChallengerCount);
    }

    private void Pair(string id, long timeTicks, double championLoss, double challengerLoss)
    {
        Paired++;
        _championSum += championLoss;
        _challengerSum += challengerLoss;
        double evidence = _test.LogWealth;
        bool decided = _test.Add(championLoss, challengerLoss);
        AfterPair?.Invoke(championLoss, challengerLoss);
        if (decided)
        {
            DecidedAt.Add(Paired);
            _declare(new AlertTransition(RuleName, true, AlertMetric.ChallengerEvidence, Math.Max(evidence, _test.Threshold), _test.Threshold,
                (int)Math.Min(int.MaxValue, Paired), id, timeTicks, Paired, AlertSeverity.Warning,
                Break: $"challenger '{Name}' has lower log-loss than the champion: mean difference {_test.MeanDifference:0.0000} nats a label over the recent labels ({ChallengerLogLoss:0.0000} against {ChampionLogLoss:0.0000} over all {Paired:N0} paired)"));
        }
    }

    /// <summary>One side's labels waiting for the other's, by id; each is given up once <see cref="MaxWaiting"/> later labels of the side have come.</summary>
    private sealed class WaitingSide
    {
        private readonly Dictionary<string, WaitingLoss> _byId = new(StringComparer.Ordinal);
        private readonly Queue<WaitingLoss> _order = new();

        /// <summary>Labels this side has graded and not paired at once.</summary>
        public long Count { get; private set; }

        public int Waiting => _byId.Count;

        public WaitingLoss? TryTake(string id) => _byId.Remove(id, out var waiting) ? waiting : null;

        // Returns the labels given up (0 or 1). The queue holds at most MaxWaiting entries,
        // paired ones among them (gone from the table), so it stays bounded either way.
        public int Add(GradedLabel label)
        {
            var waiting = new WaitingLoss(label.Id, label.TimeTicks, label.LogLoss, ++Count);
            int dropped = 0;
            while (_order.Count > 0 && _order.Peek().Sequence <= waiting.Sequence - MaxWaiting)
            {
                var old = _order.Dequeue();
                if (_byId.TryGetValue(old.Id, out var current) && ReferenceEquals(current, old))
                {
                    _byId.Remove(old.Id);
                    dropped++;
                }
            }
            // A second label of one id on one side (id reused) replaces the first, which is given up.
            if (_byId.ContainsKey(label.Id))
            {
                dropped++;
            }
            _byId[label.Id] = waiting;
            _order.Enqueue(waiting);
            return dropped;
        }

        public void Clear()
        {
            _byId.Clear();
            _order.Clear();
        }

        // The live entries in order, and the count as the last entry's place: what decides later give-ups.
        public (List<WaitingLoss> Waiting, long Count) Export() =>
            ([.. _order.Where(w => _byId.TryGetValue(w.Id, out var current) && ReferenceEquals(current, w))], Count);

        public void Import(List<WaitingLoss> waiting, long count)
        {
            Clear();
            Count = count;
            foreach (var w in waiting)
            {
                _byId[w.Id] = w;
                _order.Enqueue(w);
            }
        }
    }
}
