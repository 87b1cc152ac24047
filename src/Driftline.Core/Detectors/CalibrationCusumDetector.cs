using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using Driftline.Core.Metrics;

namespace Driftline.Core.Detectors;

/// <summary>
/// A sequential test that the probabilities still mean what they say: a bank of CUSUMs, one per
/// recalibration alternative (<see cref="RecalibrationAlternative"/>), each accumulating the
/// log-likelihood ratio of the observed outcomes under the alternative against under the
/// claimed p, with an alarm as soon as any of them has gathered enough evidence.
/// </summary>
/// <remarks>
/// <para>
/// <b>Statistic.</b> For a label y on a prediction with log-odds η = logit p and an alternative
/// with true log-odds ηₖ = a + b·η, the log-likelihood ratio is
/// ℓₖ = y·(ηₖ − η) − softplus(ηₖ) + softplus(η), and each CUSUM is Sₖ ← max(0, Sₖ + ℓₖ)
/// (Page 1954, "Continuous inspection schemes", Biometrika 41, 100–115). Against a known break
/// the CUSUM is optimal (Lorden 1971, "Procedures for reacting to a change in distribution",
/// Annals of Mathematical Statistics 42, 1897–1908; Moustakides 1986, "Optimal stopping times for
/// detecting changes in distributions", Annals of Statistics 14, 1379–1387): its delay
/// approaches ln(ARL₀)/KL, the sequential limit.
/// </para>
/// <para>
/// <b>Unknown break.</b> The size and direction of a real break are not known, so the bank
/// spans a grid of alternatives and signals when the largest Sₖ reaches h = ln(ARL₀·K) for K
/// alternatives, a discretised generalised likelihood ratio over the recalibration family of Cox
/// (1958) (for the GLR, Lorden 1971 and Lai 1998, "Information bounds and quick detection of
/// parameter changes in stochastic systems", IEEE Transactions on Information Theory 44,
/// 2917–2929). Under calibration each ℓₖ has mean −KL(p‖qₖ) and, from any start, the product
/// of the likelihood ratios is a non-negative martingale with mean 1, so by Ville's inequality
/// (Ville 1939, "Étude critique de la notion de collectif", Gauthier-Villars) the chance that any
/// of the K one-sided tests started at a given label ever reaches h is at most K·e^−h = 1/ARL₀.
/// The bank stops at the first label where a test started at some earlier label reaches h,
/// which is Lorden's (1971) construction, so its expected run to a false alarm is at least ARL₀
/// labels whatever the distribution of p (in practice far longer, as the bound ignores the
/// downward drift).
/// </para>
/// <para>
/// <b>Default grid.</b> Log-odds shifts ±0.125, ±0.25, ±0.5, ±1 (slope 1) and slopes 2^−1.5,
/// 2^−1, 2^−0.5, 2^0.5, 2^1 (intercept 0): K = 13, geometric with ratio 2 in shift and √2 in
/// slope. For a break between two grid points, the nearer alternative still collects at least
/// about 0.89 of the break's own KL per label (for local alternatives E[ℓ] ≈ KL·(2r − r²) with r
/// the ratio of alternative to true size, and with ratio-2 spacing the worse case r = 1.5 gives
/// 0.89); so the delay stays within about (h − 1)/(0.89·ln ARL₀) ≈ 1.3 of the limit for shifts
/// of 0.125 to 1 and slopes of 0.35 to 2, without knowing which (measured: 1.05–1.10 of it for
/// shifts ±0.3, ±0.4 and slopes 0.5, 0.7, 1.5). The cost of not knowing is the ln K added to h
/// (2.6 nats for K = 13).
/// </para>
/// <para>
/// <b>Alarm and clearing.</b> While raised, every Sₖ is capped at h, so the evidence held never
/// exceeds what raised the alarm and clearing does not wait for a long break to be paid back.
/// The alarm clears when every CUSUM has fallen to <c>clearFraction</c>·h (default ½): each
/// alternative has lost at least half the evidence that raises an alarm. Then every CUSUM
/// restarts from 0, so the false-alarm bound holds again from there. Clearing on the raising
/// CUSUM alone is faster but flaps: when the alternative that happened to cross first is not
/// the one that fits (a +1 shift crossing first under a +0.4 break), it falls back to 0 while
/// the break goes on, and the alarm clears and re-raises. Asking all of them is slower, set by
/// the smallest alternatives, whose CUSUMs fall at only KL(p‖qₖ) per label (about 5,000 labels
/// with the default grid on the benchmark's streams; tests/Driftline.AlertQuality has the figures).
/// </para>
/// <para>
/// Cost: O(K) per label (one softplus per alternative, four at a time in vector lanes), memory O(K). p is clipped to
/// [2⁻⁵², 1 − 2⁻⁵²] (<see cref="PredictionScores.LogLossEpsilon"/>) so a claimed certainty gives a
/// large but finite ratio. Not ready until <c>minLabels</c> labels since creation or reset.
/// </para>
/// </remarks>
internal sealed class CalibrationCusumDetector : IChangeDetector
{
    private readonly RecalibrationAlternative[] _alternatives;

    // Intercepts and slopes in lanes of four, padded with the null (0, 1), so the softplus of
    // every alternative's log-odds is taken four at a time (one vector exp and log per lane).
    private readonly double[] _intercepts;
    private readonly double[] _slopes;
    private readonly double[] _softplus;
    private readonly double[] _statistics;
    private int _raised = -1;

    /// <summary>Creates a detector with every CUSUM at 0.</summary>
    /// <param name="labelsPerFalseAlarm">ARL₀: labels between false alarms on a calibrated stream (a lower bound); greater than 1, default 10⁶.</param>
    /// <param name="alternatives">The recalibration alternatives; null means <see cref="DefaultAlternatives"/>. None may be (0, 1), which is calibration itself.</param>
    /// <param name="minLabels">Labels since creation or reset before an alarm is possible; at least 1, default 1 (the bound holds from the first label).</param>
    /// <param name="clearFraction">A raised alarm clears when every CUSUM is at or below this fraction of h; in [0, 1), default 0.5.</param>
    /// <exception cref="ArgumentOutOfRangeException">A setting is out of range, or an alternative is not finite or is (0, 1).</exception>
    /// <exception cref="ArgumentException"><paramref name="alternatives"/> is empty.</exception>
    public CalibrationCusumDetector(double labelsPerFalseAlarm = 1e6, IReadOnlyList<RecalibrationAlternative>? alternatives = null, int minLabels = 1, double clearFraction = 0.5)
    {
        if (!(labelsPerFalseAlarm > 1 && double.IsFinite(labelsPerFalseAlarm)))
        {
            throw new ArgumentOutOfRangeException(nameof(labelsPerFalseAlarm), labelsPerFalseAlarm, "Labels per false alarm must be a finite number above 1, e.g. 1e6.");
        }

        ArgumentOutOfRangeException.ThrowIfLessThan(minLabels, 1);
        if (!(clearFraction >= 0 && clearFraction < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(clearFraction), clearFraction, "The clear fraction must lie in [0, 1), e.g. 0.5.");
        }

        _alternatives = [.. alternatives ?? DefaultAlternatives];
        if (_alternatives.Length == 0)
        {
            throw new ArgumentException("Give at least one alternative.", nameof(alternatives));
        }

        foreach (RecalibrationAlternative a in _alternatives)
        {
            if (!double.IsFinite(a.Intercept) || !double.IsFinite(a.Slope) || a == new RecalibrationAlternative(0, 1))
            {
                throw new ArgumentOutOfRangeException(nameof(alternatives), a, "An alternative must be finite and differ from intercept 0, slope 1.");
            }
        }

        LabelsPerFalseAlarm = labelsPerFalseAlarm;
        MinLabels = minLabels;
        ClearFraction = clearFraction;
        Threshold = Math.Log(labelsPerFalseAlarm * _alternatives.Length);
        _statistics = new double[_alternatives.Length];
        int lanes = (_alternatives.Length + Vector256<double>.Count - 1) / Vector256<double>.Count * Vector256<double>.Count;
        _intercepts = new double[lanes];
        _slopes = new double[lanes];
        Array.Fill(_slopes, 1.0);
        for (int k = 0; k < _alternatives.Length; k++)
        {
            _intercepts[k] = _alternatives[k].Intercept;
            _slopes[k] = _alternatives[k].Slope;
        }
        _softplus = new double[lanes];
    }

    private CalibrationCusumDetector(CalibrationCusumDetector source)
    {
        _alternatives = source._alternatives;
        _intercepts = source._intercepts;
        _slopes = source._slopes;
        _softplus = new double[source._softplus.Length];
        _statistics = (double[])source._statistics.Clone();
        LabelsPerFalseAlarm = source.LabelsPerFalseAlarm;
        MinLabels = source.MinLabels;
        ClearFraction = source.ClearFraction;
        Threshold = source.Threshold;
        _raised = source._raised;
        State = source.State;
        Count = source.Count;
        Detections = source.Detections;
        Clears = source.Clears;
    }

    /// <summary>
    /// The default grid: log-odds shifts ±0.125, ±0.25, ±0.5, ±1 at slope 1 and slopes
    /// 2^−1.5, 2^−1, 2^−0.5, 2^0.5, 2^1 at intercept 0 (see remarks for why).
    /// </summary>
    public static IReadOnlyList<RecalibrationAlternative> DefaultAlternatives { get; } =
    [
        new(-1, 1), new(-0.5, 1), new(-0.25, 1), new(-0.125, 1),
        new(0.125, 1), new(0.25, 1), new(0.5, 1), new(1, 1),
        new(0, Math.Pow(2, -1.5)), new(0, 0.5), new(0, Math.Sqrt(0.5)), new(0, Math.Sqrt(2)), new(0, 2),
    ];

    /// <summary>ARL₀, the lower bound on labels between false alarms on a calibrated stream.</summary>
    public double LabelsPerFalseAlarm { get; }

    /// <summary>Labels since creation or reset before an alarm is possible.</summary>
    public int MinLabels { get; }

    /// <summary>Fraction of h that every CUSUM must fall to before a raised alarm clears.</summary>
    public double ClearFraction { get; }

    /// <summary>The alarm level h = ln(ARL₀ · K), in nats of evidence.</summary>
    public double Threshold { get; }

    /// <summary>The alternatives, in the order of <see cref="CopyStatistics"/>.</summary>
    public IReadOnlyList<RecalibrationAlternative> Alternatives => _alternatives;

    /// <summary>The largest CUSUM now, in nats; 0 at the start.</summary>
    public double Statistic
    {
        get
        {
            // Read after every label by the alert rule: a plain loop, not LINQ.
            double max = _statistics[0];
            for (int k = 1; k < _statistics.Length; k++)
            {
                max = Math.Max(max, _statistics[k]);
            }
            return max;
        }
    }

    /// <summary>True from an alarm until it clears.</summary>
    public bool IsRaised => _raised >= 0;

    /// <summary>
    /// While raised, the alternative with the largest CUSUM: the best-supported way the
    /// probabilities are off (it starts as the one that raised the alarm and moves only to a
    /// strictly larger CUSUM); null when not raised.
    /// </summary>
    public RecalibrationAlternative? RaisedBy => _raised < 0 ? null : _alternatives[_raised];

    /// <inheritdoc/>
    public DetectorState State { get; private set; } = DetectorState.NotReady;

    /// <inheritdoc/>
    public long Count { get; private set; }

    /// <inheritdoc/>
    public long Detections { get; private set; }

    /// <summary>Alarms cleared since creation or the last reset.</summary>
    public long Clears { get; private set; }

    /// <summary>
    /// Reads one graded prediction and returns the new state: <see cref="DetectorState.Drift"/>
    /// from the label that raises an alarm until the one that clears it.
    /// </summary>
    /// <param name="p">The probability the model claimed, in [0, 1].</param>
    /// <param name="y">The outcome, 0 or 1.</param>
    /// <exception cref="ArgumentOutOfRangeException">p is NaN, infinite or outside [0, 1], or y is not 0 or 1; the detector is unchanged.</exception>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public DetectorState Add(double p, int y)
    {
        PredictionScores.Validate(p, y);
        double clipped = Math.Clamp(p, PredictionScores.LogLossEpsilon, 1 - PredictionScores.LogLossEpsilon);
        double odds = clipped / (1 - clipped);
        double eta = Math.Log(odds);
        // softplus(eta) = ln(1 + odds); odds stays below 5e15 after clipping, so this cannot overflow.
        double softplus = Math.Log(1 + odds);
        AlternativeSoftplus(eta);

        Count++;
        int best = 0;
        for (int k = 0; k < _alternatives.Length; k++)
        {
            double alternative = _intercepts[k] + (_slopes[k] * eta);
            double ratio = (y == 1 ? alternative - eta : 0) - _softplus[k] + softplus;
            double s = Math.Clamp(_statistics[k] + ratio, 0, Threshold);
            _statistics[k] = s;
            if (s > _statistics[best])
            {
                best = k;
            }
        }

        if (_raised >= 0)
        {
            if (_statistics[best] <= ClearFraction * Threshold)
            {
                _raised = -1;
                Clears++;
                Restart();
                State = DetectorState.Stable;
            }
            else if (_statistics[best] > _statistics[_raised])
            {
                _raised = best;
            }
        }
        else if (Count < MinLabels)
        {
            State = DetectorState.NotReady;
        }
        else if (_statistics[best] >= Threshold)
        {
            _raised = best;
            Detections++;
            State = DetectorState.Drift;
        }
        else
        {
            State = DetectorState.Stable;
        }

        return State;
    }

    /// <summary>Writes the K CUSUMs, in the order of <see cref="Alternatives"/>, into <paramref name="destination"/>.</summary>
    /// <exception cref="ArgumentException"><paramref name="destination"/> is shorter than K.</exception>
    public void CopyStatistics(Span<double> destination) => _statistics.CopyTo(destination);

    /// <inheritdoc/>
    public void Reset()
    {
        Restart();
        _raised = -1;
        State = DetectorState.NotReady;
        Count = 0;
        Detections = 0;
        Clears = 0;
    }

    /// <summary>An independent copy that continues exactly as the original would.</summary>
    public CalibrationCusumDetector Copy() => new(this);

    /// <summary>The detector's state for a snapshot: the K CUSUMs and the index of the raising alternative (−1 when not raised).</summary>
    public (double[] Statistics, int Raised, long Count, long Detections, long Clears, DetectorState State) Export() =>
        ((double[])_statistics.Clone(), _raised, Count, Detections, Clears, State);

    /// <summary>Continues from a state produced by <see cref="Export"/> on a detector with the same alternatives.</summary>
    /// <exception cref="ArgumentException">The number of statistics does not match the alternatives.</exception>
    public void Import(ReadOnlySpan<double> statistics, int raised, long count, long detections, long clears, DetectorState state)
    {
        if (statistics.Length != _statistics.Length || raised < -1 || raised >= _statistics.Length)
        {
            throw new ArgumentException($"a snapshot of {statistics.Length} CUSUMs does not fit a detector with {_statistics.Length} alternatives", nameof(statistics));
        }
        statistics.CopyTo(_statistics);
        _raised = raised;
        Count = count;
        Detections = detections;
        Clears = clears;
        State = state;
    }

    /// <inheritdoc/>
    IChangeDetector IChangeDetector.Copy() => Copy();

    // softplus(a + b·eta) for every alternative, in the stable form max(x, 0) + ln(1 + e^−|x|);
    // the argument of ln lies in (1, 2], where ln(1 + z) loses nothing that matters to a sum of
    // log-likelihood ratios (its absolute error stays near 1e-16).
    private void AlternativeSoftplus(double eta)
    {
        var etas = Vector256.Create(eta);
        for (int g = 0; g < _slopes.Length; g += Vector256<double>.Count)
        {
            var x = Vector256.Create<double>(_intercepts.AsSpan(g)) + (Vector256.Create<double>(_slopes.AsSpan(g)) * etas);
            var softplus = Vector256.Max(x, Vector256<double>.Zero) + Vector256.Log(Vector256<double>.One + Vector256.Exp(-Vector256.Abs(x)));
            softplus.CopyTo(_softplus.AsSpan(g));
        }
    }

    private void Restart()
    {
        Array.Clear(_statistics);
    }
}
