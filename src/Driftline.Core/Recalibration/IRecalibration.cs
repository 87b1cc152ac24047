namespace Driftline.Core.Recalibration;

/// <summary>
/// A live correction of one model's probabilities, fitted online from graded labels: the
/// log-odds correction for a binary model (<see cref="LogOddsRecalibration"/>), vector scaling
/// for a model over K classes (<see cref="VectorScaling"/>). The engine sees only this.
/// </summary>
/// <remarks>
/// Probabilities travel as the model's outputs: one value P(y = 1) for a binary model, K values
/// summing to 1 for a multiclass one; a label is 0/1 or the class index accordingly.
/// </remarks>
internal interface IRecalibration
{
    /// <summary>Whether <see cref="Apply"/> corrects now (else it passes the model's own through).</summary>
    bool Serving { get; }

    /// <summary>Labels learned from.</summary>
    long Labels { get; }

    /// <summary>Labels graded since a calibration rule of this model was last seen raised.</summary>
    long ClearStreak { get; }

    /// <summary>The fitted pair of each output: the binary model's one (a, b), or each class's (a_k, b_k).</summary>
    IReadOnlyList<(double Intercept, double Slope)> Parameters { get; }

    /// <summary>Writes the probabilities to serve for the model's own <paramref name="raw"/> into <paramref name="served"/>.</summary>
    void Apply(ReadOnlySpan<double> raw, Span<double> served);

    /// <summary>Updates the fit with one graded prediction: the model's own probabilities and the outcome.</summary>
    void Learn(ReadOnlySpan<double> raw, int y);

    /// <summary>
    /// For <see cref="RecalibrationMode.OnAlert"/>, after each graded label: whether any calibration
    /// rule of this model is raised now.
    /// </summary>
    void ObserveRules(bool anyRaised);

    /// <summary>The state to checkpoint.</summary>
    RecalibrationState Export();

    /// <summary>Restores a state written by <see cref="Export"/>; the options must be the same to continue exactly.</summary>
    /// <exception cref="ArgumentException">The state is damaged.</exception>
    void Import(RecalibrationState state);

    /// <summary>The correction for a model with <paramref name="outputs"/> outputs: 1 (binary) or the class count.</summary>
    static IRecalibration Create(RecalibrationOptions options, int outputs) =>
        outputs == 1 ? new LogOddsRecalibration(options) : new VectorScaling(options, outputs);
}
