namespace Driftline.Core.Challengers;

/// <summary>
/// A sequential test of "the challenger's log-loss is lower than the champion's" on the paired
/// per-label differences d = loss(champion) − loss(challenger), valid at every label at once.
/// </summary>
/// <remarks>
/// <para>
/// Testing by betting (Waudby-Smith &amp; Ramdas 2024, "Estimating means of bounded random variables
/// by betting", JRSS-B 86; Shafer 2021, "Testing by betting", JRSS-A 184). Each difference is
/// clipped to ±c and scaled to x ∈ [−1, 1]. The evidence is the wealth W = Π (1 + λ_t x_t) of a
/// bettor who stakes a fraction λ_t ∈ [0, ½], chosen from earlier labels only, on the challenger
/// being better. If the challenger is not better (E[x_t | past] ≤ 0 at every label) W is a
/// non-negative supermartingale, so by Ville's inequality it ever reaches 1/α with probability at
/// most α: the error rate holds however long the test runs and however often it is looked at.
/// </para>
/// <para>
/// The stake is the growth-rate-optimal fraction μ/(σ² + μ²) of the "GRAPA" rule in the same
/// paper, from forgotten estimates of the mean and second moment (half-life
/// <see cref="EstimateHalfLife"/> labels) so the bet follows a stream whose relationship changes;
/// it is 0 while the challenger looks worse, which costs no evidence. After a decision the test
/// starts afresh.
/// </para>
/// </remarks>
internal sealed class PairedLossTest
{
    /// <summary>Half-life, in labels, of the estimates that set the stake: 500.</summary>
    public const double EstimateHalfLife = 500;

    private const double MaxStake = 0.5;
    private static readonly double EstimateDecay = Math.Pow(2.0, -1.0 / EstimateHalfLife);

    private readonly double _clip;
    private readonly double _threshold;
    private double _mean;
    private double _square;
    private double _weight;

    /// <summary>Starts with no evidence (wealth 1).</summary>
    public PairedLossTest(ChallengerOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        _clip = options.LossClip;
        _threshold = Math.Log(1.0 / options.ErrorRate);
    }

    /// <summary>Natural log of the evidence; the challenger is declared better when it reaches ln(1/α).</summary>
    public double LogWealth { get; private set; }

    /// <summary>ln(1/α), the level <see cref="LogWealth"/> must reach.</summary>
    public double Threshold => _threshold;

    /// <summary>Paired labels since the test last started.</summary>
    public long Labels { get; private set; }

    /// <summary>Times the challenger has been declared better.</summary>
    public long Decisions { get; private set; }

    /// <summary>Mean per-label difference (champion − challenger, clipped, nats) behind the current stake; 0 before any label.</summary>
    public double MeanDifference => _weight > 0 ? _mean / _weight * _clip : 0;

    /// <summary>
    /// Adds one paired label. Returns true when the challenger is declared better at this label;
    /// the evidence then restarts from wealth 1.
    /// </summary>
    /// <param name="championLoss">The champion's log-loss on the label.</param>
    /// <param name="challengerLoss">The challenger's log-loss on the same label.</param>
    public bool Add(double championLoss, double challengerLoss)
    {
        double d = championLoss - challengerLoss;
        if (!double.IsFinite(d))
        {
            return false;
        }
        double x = Math.Clamp(d, -_clip, _clip) / _clip;
        double stake = Stake();
        LogWealth += double.LogP1(stake * x);
        Labels++;
        _mean = EstimateDecay * _mean + x;
        _square = EstimateDecay * _square + x * x;
        _weight = EstimateDecay * _weight + 1;
        if (LogWealth < _threshold)
        {
            return false;
        }
        Decisions++;
        LogWealth = 0;
        Labels = 0;
        return true;
    }

    /// <summary>The state to checkpoint.</summary>
    public PairedLossState Export() => new(LogWealth, _mean, _square, _weight, Labels, Decisions);

    /// <summary>Restores a state written by <see cref="Export"/>.</summary>
    /// <exception cref="ArgumentException">A number is not finite or out of its range.</exception>
    public void Import(PairedLossState state)
    {
        ArgumentNullException.ThrowIfNull(state);
        if (!double.IsFinite(state.LogWealth) || !double.IsFinite(state.Mean) || !double.IsFinite(state.Square)
            || !double.IsFinite(state.Weight) || state.Weight < 0 || state.Square < 0 || state.Labels < 0 || state.Decisions < 0)
        {
            throw new ArgumentException("the challenger evidence is damaged: every number must be finite and the counts not negative", nameof(state));
        }
        (LogWealth, _mean, _square, _weight, Labels, Decisions) =
            (state.LogWealth, state.Mean, state.Square, state.Weight, state.Labels, state.Decisions);
    }

    private double Stake()
    {
        // A weak start (one pseudo-label of variance 1) keeps the first stakes small.
        double w = _weight + 1;
        double mean = _mean / w;
        double square = (_square + 1) / w;
        return mean <= 0 ? 0 : Math.Min(MaxStake, mean / square);
    }
}
