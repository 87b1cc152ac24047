namespace Driftline.Core.Detectors;

/// <summary>
/// The Page–Hinkley test for an increase in the mean of a stream, such as a rise in per-label
/// log-loss. Page (1954), "Continuous inspection schemes", Biometrika 41, 100–115, in the
/// running-mean form of Hinkley (1971), "Inference about the change-point from cumulative sum
/// tests", Biometrika 58, 509–523.
/// </summary>
/// <remarks>
/// <para>
/// With x̄ᵢ the mean of the values since the start, the statistic is mₜ = Σᵢ≤ₜ (xᵢ − x̄ᵢ − δ)
/// and a change is signalled when mₜ − minᵢ≤ₜ mᵢ exceeds λ: the cumulative excess over the
/// running mean, less the tolerance δ per value, has climbed λ above its lowest point. On a
/// signal the test restarts from the next value (mean, sum and minimum forgotten), so it
/// measures the new level from scratch; <see cref="IChangeDetector.Detections"/> keeps counting.
/// </para>
/// <para>
/// δ and λ are in the units of the values. The defaults (δ = 0.05, λ = 50) suit per-label
/// log-loss in nats, whose standard deviation σ on a calibrated stream is about 0.5 (0.49 for
/// p ~ Beta(2, 5), 0.50 for uniform p). By the Brownian approximation to a reflected walk with
/// drift −δ, the mean run to a false signal is (σ²/2δ²)·(e^u − 1 − u) with u = 2δλ/σ² (Siegmund
/// 1985, "Sequential Analysis: Tests and Confidence Intervals", Springer): beyond 10¹⁰ values at
/// σ = 0.5, still about 3·10⁵ at σ = 0.8. A rise of the mean by Δ &gt; δ is found after about
/// λ / (Δ − δ) values (200 for Δ = 0.3). Calibration breaks move mean log-loss little (a +0.4
/// log-odds shift by about 0.06 nats on Beta(2, 5) probabilities); the calibration CUSUM
/// (<see cref="CalibrationCusumDetector"/>) is the detector for those.
/// </para>
/// <para>O(1) time and memory per value. Not ready until <c>minCount</c> values since the last restart.</para>
/// </remarks>
internal sealed class PageHinkleyDetector : ChangeDetector
{
    private double _sum;
    private long _sinceRestart;
    private double _cumulative;
    private double _minimum;

    /// <summary>Creates a detector.</summary>
    /// <param name="delta">Tolerated rise per value, δ ≥ 0, in the values' units; default 0.05.</param>
    /// <param name="threshold">Signal level λ &gt; 0, in the values' units; default 50.</param>
    /// <param name="minCount">Values since the last restart before a signal is possible; at least 1, default 30.</param>
    /// <exception cref="ArgumentOutOfRangeException">A setting is out of range or not finite.</exception>
    public PageHinkleyDetector(double delta = 0.05, double threshold = 50, int minCount = 30)
    {
        if (!(delta >= 0 && double.IsFinite(delta)))
        {
            throw new ArgumentOutOfRangeException(nameof(delta), delta, "δ must be a finite number ≥ 0.");
        }

        if (!(threshold > 0 && double.IsFinite(threshold)))
        {
            throw new ArgumentOutOfRangeException(nameof(threshold), threshold, "λ must be a finite number > 0.");
        }

        ArgumentOutOfRangeException.ThrowIfLessThan(minCount, 1);
        Delta = delta;
        Threshold = threshold;
        MinCount = minCount;
    }

    /// <summary>Tolerated rise per value, δ.</summary>
    public double Delta { get; }

    /// <summary>Signal level λ.</summary>
    public double Threshold { get; }

    /// <summary>Values since the last restart before a signal is possible.</summary>
    public int MinCount { get; }

    /// <summary>The current statistic mₜ − min mᵢ (0 right after a restart).</summary>
    public double Statistic => _cumulative - _minimum;

    /// <summary>Mean of the values since the last restart; NaN before any.</summary>
    public double Mean => _sinceRestart == 0 ? double.NaN : _sum / _sinceRestart;

    /// <inheritdoc/>
    public override DetectorState Add(double value)
    {
        RequireFinite(value);
        Count++;
        _sinceRestart++;
        _sum += value;
        _cumulative += value - (_sum / _sinceRestart) - Delta;
        _minimum = Math.Min(_minimum, _cumulative);

        if (_sinceRestart < MinCount)
        {
            State = DetectorState.NotReady;
        }
        else if (_cumulative - _minimum > Threshold)
        {
            Detections++;
            Restart();
            State = DetectorState.Drift;
        }
        else
        {
            State = DetectorState.Stable;
        }

        return State;
    }

    /// <inheritdoc/>
    public override void Reset()
    {
        Restart();
        Count = 0;
        Detections = 0;
        State = DetectorState.NotReady;
    }

    /// <inheritdoc/>
    protected override double[] ExportValues() => [_sum, _sinceRestart, _cumulative, _minimum];

    /// <inheritdoc/>
    protected override void ImportValues(double[] values)
    {
        if (values.Length != 4)
        {
            throw new ArgumentException($"a Page–Hinkley state has 4 values, not {values.Length}", nameof(values));
        }
        _sum = values[0];
        _sinceRestart = (long)values[1];
        _cumulative = values[2];
        _minimum = values[3];
    }

    /// <inheritdoc/>
    public override PageHinkleyDetector Copy()
    {
        var copy = new PageHinkleyDetector(Delta, Threshold, MinCount)
        {
            _sum = _sum,
            _sinceRestart = _sinceRestart,
            _cumulative = _cumulative,
            _minimum = _minimum,
        };
        copy.Count = Count;
        copy.Detections = Detections;
        copy.State = State;
        return copy;
    }

    private void Restart()
    {
        _sum = 0;
        _sinceRestart = 0;
        _cumulative = 0;
        _minimum = 0;
    }
}
