namespace Driftline.Core.Metrics;

/// <summary>
/// Calibration intercept and slope: the logistic regression of the outcome on the model's own
/// log-odds, y ~ a + b · logit(p) (Cox 1958, "Two Further Applications of a Model for Binary
/// Regression", Biometrika 45). Perfect calibration is a = 0, b = 1.
/// </summary>
/// <remarks>
/// Not an accumulator: the fit is iterative, so it runs over a window's contents when a value is
/// wanted (a few Newton steps over the window, O(n) each; it allocates the design, so it is
/// for on-demand use such as an alert's explanation, not per label).
/// </remarks>
internal static class CalibrationSlope
{
    /// <summary>Default fewest predictions to fit, 10 (two parameters need some data behind them).</summary>
    public const int DefaultMinimumCount = 10;

    private const int MaxIterations = 100;

    /// <summary>Fits intercept and slope over the predictions held by <paramref name="window"/>.</summary>
    public static CalibrationFit Fit(CalibrationWindow window, int minimumCount = DefaultMinimumCount)
    {
        ArgumentNullException.ThrowIfNull(window);
        return Fit(window.ToArray(), minimumCount);
    }

    /// <summary>Fits intercept and slope over the predictions held by <paramref name="window"/>.</summary>
    public static CalibrationFit Fit(TimeWindow window, int minimumCount = DefaultMinimumCount)
    {
        ArgumentNullException.ThrowIfNull(window);
        TimedPrediction[] held = window.ToArray();
        return Fit(Array.ConvertAll(held, static t => new GradedPrediction(t.P, t.Y)), minimumCount);
    }

    /// <summary>
    /// Fits y ~ a + b · logit(p) by maximum likelihood, using Newton's method with step halving.
    /// </summary>
    /// <param name="predictions">Graded predictions; p is clipped to [ε, 1 − ε] with ε = <see cref="PredictionScores.LogLossEpsilon"/>
    /// before taking the logit, as for log-loss, so p = 0 or 1 gives a logit of about ∓36 instead of infinity.</param>
    /// <param name="minimumCount">Fewest predictions to attempt a fit; at least 2, default <see cref="DefaultMinimumCount"/>.</param>
    /// <returns>
    /// The estimates, or a not-ready result saying why: too few predictions, one class only, a
    /// single distinct logit, or outcomes separated by the logit (no finite estimate exists).
    /// </returns>
    /// <exception cref="ArgumentOutOfRangeException">A prediction is invalid, or <paramref name="minimumCount"/> is below 2.</exception>
    public static CalibrationFit Fit(ReadOnlySpan<GradedPrediction> predictions, int minimumCount = DefaultMinimumCount)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(minimumCount, 2);
        int n = predictions.Length;
        // One pass for the checks that decide whether a finite estimate exists at all. In one
        // dimension the maximum-likelihood estimate exists exactly when the logits of the two
        // classes overlap (Albert & Anderson 1984, "On the Existence of Maximum Likelihood
        // Estimates in Logistic Regression Models", Biometrika 71); checking that first means
        // Newton's method is only run on a strictly concave problem with a finite maximum.
        double min0 = double.PositiveInfinity, max0 = double.NegativeInfinity;
        double min1 = double.PositiveInfinity, max1 = double.NegativeInfinity;
        foreach (GradedPrediction g in predictions)
        {
            PredictionScores.Validate(g.P, g.Y);
            double x = Logit(g.P);
            if (g.Y == 1)
            {
                min1 = Math.Min(min1, x);
                max1 = Math.Max(max1, x);
            }
            else
            {
                min0 = Math.Min(min0, x);
                max0 = Math.Max(max0, x);
            }
        }

        if (n < minimumCount)
        {
            return CalibrationFit.NotReady(CalibrationFitStatus.TooFewSamples, n);
        }

        if (double.IsInfinity(min0) || double.IsInfinity(min1))
        {
            return CalibrationFit.NotReady(CalibrationFitStatus.OneClass, n);
        }

        if (Math.Min(min0, min1) == Math.Max(max0, max1))
        {
            return CalibrationFit.NotReady(CalibrationFitStatus.NoSpread, n);
        }

        if (max0 <= min1 || max1 <= min0)
        {
            return CalibrationFit.NotReady(CalibrationFitStatus.Separated, n);
        }

        // The recalibration is a one-feature logistic regression of y on logit(p): the same
        // Newton/IRLS fit (MathNet.Numerics) as `driftline fit`, started at perfect calibration
        // (a = 0, b = 1), where live models usually are, so few steps follow.
        var rows = new double[n][];
        var labels = new double[n];
        for (int i = 0; i < n; i++)
        {
            rows[i] = [Logit(predictions[i].P)];
            labels[i] = predictions[i].Y;
        }
        var fit = Fitting.LogisticNewtonFit.Fit(rows, labels, start: [0.0, 1.0], maxIterations: MaxIterations);
        return fit.Converged
            ? new CalibrationFit(CalibrationFitStatus.Ready, n, fit.Intercept, fit.Coefficients[0], fit.Iterations)
            : CalibrationFit.NotReady(CalibrationFitStatus.NotConverged, n, fit.Iterations);
    }

    /// <summary>log(p / (1 − p)) with p clipped to [ε, 1 − ε], ε = <see cref="PredictionScores.LogLossEpsilon"/>.</summary>
    public static double Logit(double p)
    {
        double c = Math.Clamp(p, PredictionScores.LogLossEpsilon, 1.0 - PredictionScores.LogLossEpsilon);
        return Math.Log(c) - Math.Log(1.0 - c);
    }
}
