using Driftline.Core.Alerts;
using Driftline.Core.Scoring;
using Driftline.Core.Snapshots;

namespace Driftline.Core.Challengers;

/// <summary>
/// The champion and its challengers on one stream: wires each challenger's judge to the
/// champion's graded labels, sends every verdict to the champion's alerts and, with
/// <see cref="ChallengerOptions.AutoPromote"/>, swaps a challenger declared better in as the
/// champion once the record in hand is done (<see cref="Settle"/>).
/// </summary>
/// <remarks>
/// A promotion restores the challenger's snapshot behind the champion's outputs: its model,
/// configuration and state serve from the next record on. The challenger leaves the panel (it
/// is the champion now), and the old champion is dropped rather than kept as a challenger: it
/// has just been shown worse at the stated error rate, keeping it would cost a whole engine per
/// stream, and a configuration wanted back is given again as a challenger. The other
/// challengers' tests start afresh, since evidence against the old champion says nothing about
/// the new one. The judging policy (<see cref="ChallengerOptions"/>) stays the run's, whatever
/// the promoted configuration's own <c>Challengers</c> section says.
/// </remarks>
internal sealed class ChallengerPanel
{
    /// <summary>Rule name of the line written when a challenger replaces the champion.</summary>
    public const string PromotedRule = "challenger-promoted";

    private readonly ChallengerOptions _options;
    private readonly Func<EngineSnapshot, ScoringEngine> _becomeChampion;
    private readonly List<ChallengerEntry> _entries = [];
    private (ChallengerEntry Entry, AlertTransition Decision)? _due;

    /// <summary>
    /// A panel around <paramref name="champion"/>. <paramref name="becomeChampion"/> makes the
    /// new champion's engine from a promoted challenger's snapshot, writing into the champion's
    /// outputs, and puts it where the driver looks for the champion.
    /// </summary>
    public ChallengerPanel(ScoringEngine champion, ChallengerOptions options, Func<EngineSnapshot, ScoringEngine> becomeChampion)
    {
        ArgumentNullException.ThrowIfNull(champion);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(becomeChampion);
        Champion = champion;
        _options = options;
        _becomeChampion = becomeChampion;
    }

    /// <summary>The engine serving now.</summary>
    public ScoringEngine Champion { get; private set; }

    /// <summary>The challengers still judged, in the order added.</summary>
    public IReadOnlyList<ChallengerEntry> Challengers => _entries;

    /// <summary>Challengers promoted so far, in order (restored from a checkpoint too).</summary>
    public List<ChallengerPromotion> Promotions { get; } = [];

    /// <summary>Called with each verdict (challenger-better), after it went to the champion's alerts; may be null.</summary>
    public Action<AlertTransition>? Decided { get; init; }

    /// <summary>Called after each promotion, with the new champion; may be null.</summary>
    public Action<ChallengerPromotion, ScoringEngine>? Promoted { get; init; }

    /// <summary>Adds a challenger; its graded labels are paired with the champion's from now on.</summary>
    public ChallengerEntry Add(string name, ScoringEngine challenger)
    {
        ArgumentNullException.ThrowIfNull(challenger);
        ChallengerEntry? entry = null;
        var judge = new ChallengerJudge(name, _options, alert =>
        {
            Champion.Emit(alert);
            Decided?.Invoke(alert);
            if (_options.AutoPromote && _due is null)
            {
                _due = (entry!, alert);
            }
        });
        entry = new ChallengerEntry(name, challenger, judge);
        Champion.LabelGraded += judge.Champion;
        challenger.LabelGraded = judge.Challenger;
        _entries.Add(entry);
        return entry;
    }

    /// <summary>
    /// After every engine has taken the record: promotes the challenger declared better during
    /// it, if promotion is on. Returns the promotion made, or null (the usual case, one check).
    /// </summary>
    public ChallengerPromotion? Settle()
    {
        if (_due is not { } due)
        {
            return null;
        }
        _due = null;
        var (entry, decision) = due;
        long labels = Champion.Counters.Labels;
        var champion = _becomeChampion(entry.Engine.Snapshot());
        _entries.Remove(entry);
        entry.Engine.LabelGraded = null;
        Champion = champion;
        foreach (var other in _entries)
        {
            other.Judge.Restart();
            champion.LabelGraded += other.Judge.Champion;
        }
        var promotion = new ChallengerPromotion(entry.Name, labels, decision.EventId, decision.TimeTicks);
        Promotions.Add(promotion);
        champion.Emit(new AlertTransition(PromotedRule, true, AlertMetric.ChallengerEvidence, decision.Value, decision.Threshold, decision.Window,
            decision.EventId, decision.TimeTicks, labels, AlertSeverity.Warning,
            Break: $"challenger '{entry.Name}' replaces the champion from the next record (Challengers:AutoPromote): its model, configuration and state now serve; the previous champion is dropped"));
        Promoted?.Invoke(promotion, champion);
        return promotion;
    }
}
