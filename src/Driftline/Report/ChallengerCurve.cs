using Driftline.Core.Challengers;

namespace Driftline.Report;

/// <summary>
/// A challenger's paired log-loss across the run, for the report: the champion's and the
/// challenger's mean over each stretch of paired labels. Stretches start at
/// <see cref="FirstStretch"/> labels and double (merging neighbours) whenever there would be
/// more than <see cref="MaxPoints"/>, so memory and chart size stay fixed however long the run.
/// </summary>
internal sealed class ChallengerCurve
{
    /// <summary>Paired labels per stretch at the start: 500.</summary>
    public const int FirstStretch = 500;

    /// <summary>Most points kept: 400.</summary>
    public const int MaxPoints = 400;

    private readonly List<Stretch> _done = [];
    private long _stretch = FirstStretch;
    private Stretch _open;
    private long _paired;

    /// <summary>The stretches (the last one still open): the paired label each ends at, and both sides' mean log-loss over it.</summary>
    public IReadOnlyList<(long Paired, double Champion, double Challenger)> Points =>
        [.. _done.Append(_open).Where(s => s.Count > 0).Select(s => (s.End, s.Champion / s.Count, s.Challenger / s.Count))];

    /// <summary>Adds the pair the judge just made (its means move by exactly that pair).</summary>
    public void Add(double championLoss, double challengerLoss)
    {
        _paired++;
        _open = new Stretch(_paired, _open.Count + 1, _open.Champion + championLoss, _open.Challenger + challengerLoss);
        if (_open.Count < _stretch)
        {
            return;
        }
        _done.Add(_open);
        _open = default;
        if (_done.Count > MaxPoints)
        {
            // Halve the resolution: neighbours merge, and later stretches are twice as long.
            var merged = new List<Stretch>();
            for (int i = 0; i + 1 < _done.Count; i += 2)
            {
                var (a, b) = (_done[i], _done[i + 1]);
                merged.Add(new Stretch(b.End, a.Count + b.Count, a.Champion + b.Champion, a.Challenger + b.Challenger));
            }
            if (_done.Count % 2 == 1)
            {
                merged.Add(_done[^1]);
            }
            _done.Clear();
            _done.AddRange(merged);
            _stretch *= 2;
        }
    }

    /// <summary>Follows <paramref name="judge"/>: every pair it makes is added.</summary>
    public void Follow(ChallengerJudge judge)
    {
        ArgumentNullException.ThrowIfNull(judge);
        judge.AfterPair = Add;
    }

    private readonly record struct Stretch(long End, long Count, double Champion, double Challenger);
}
