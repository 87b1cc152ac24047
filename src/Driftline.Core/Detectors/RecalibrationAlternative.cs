namespace Driftline.Core.Detectors;

/// <summary>
/// One way the probabilities can be wrong, as a logistic recalibration of what they claim:
/// the truth is logit q = <see cref="Intercept"/> + <see cref="Slope"/> · logit p (the
/// recalibration family of Cox (1958), "Two further applications of a model for binary
/// regression", Biometrika 45, 562–565).
/// </summary>
/// <param name="Intercept">Shift of the true log-odds: above 0 the model under-predicts, below 0 it over-predicts.</param>
/// <param name="Slope">Scale of the true log-odds: below 1 the model is over-confident, above 1 under-confident.</param>
internal readonly record struct RecalibrationAlternative(double Intercept, double Slope)
{
    /// <summary>The log-odds the alternative says are true when the model claims log-odds <paramref name="eta"/>.</summary>
    public double TrueLogOdds(double eta) => Intercept + (Slope * eta);

    /// <summary>A short description for alert text, such as "log-odds +0.25 (under-predicting)".</summary>
    public string Describe()
    {
        var parts = new List<string>(2);
        if (Intercept != 0)
        {
            parts.Add(FormattableString.Invariant($"log-odds {Intercept:+0.###;-0.###} ({(Intercept > 0 ? "under-predicting" : "over-predicting")})"));
        }

        if (Slope != 1)
        {
            parts.Add(FormattableString.Invariant($"slope {Slope:0.###} ({(Slope < 1 ? "over-confident" : "under-confident")})"));
        }

        return parts.Count == 0 ? "calibrated" : string.Join(", ", parts);
    }
}
