namespace Driftline.Core.Snapshots;

/// <summary>
/// How a model saved by <c>fit</c> was made: a batch maximum-likelihood fit rather than online
/// learning. Only for description (<c>inspect</c>); restoring ignores it, and a warm-started
/// model learns with its own configuration's learner settings.
/// </summary>
internal sealed class BatchFitSnapshot
{
    /// <summary>The method, in words, such as "maximum likelihood, Newton/IRLS".</summary>
    public string Method { get; set; } = "";

    /// <summary>Labelled events the fit used.</summary>
    public long Rows { get; set; }

    /// <summary>The L2 penalty on the coefficients (0: plain maximum likelihood).</summary>
    public double Ridge { get; set; }

    /// <summary>Newton steps taken.</summary>
    public int Iterations { get; set; }

    /// <summary>The log-likelihood at the estimate (without the penalty).</summary>
    public double LogLikelihood { get; set; }

    /// <summary>The log-likelihood of the intercept-only model on the same rows.</summary>
    public double NullLogLikelihood { get; set; }

    /// <summary>The levels left out as references, one per one-hot categorical (their effect is in the intercept).</summary>
    public List<string> ReferenceLevels { get; set; } = [];
}
