using Driftline.Core.Metrics;

namespace Driftline.Core.Fitting;

/// <summary>Figures of probabilities on held-out rows.</summary>
/// <param name="LogLoss">Mean negative log-likelihood, natural log, p clipped as <see cref="PredictionScores.LogLoss"/> does.</param>
/// <param name="Brier">Mean (p − y)² (Brier 1950).</param>
/// <param name="Ece">Expected calibration error over 10 equal-width left-closed bins (Naeini, Cooper &amp; Hauskrecht 2015).</param>
/// <param name="Auc">Area under the ROC curve, ties counting half; NaN when the rows hold one label only.</param>
/// <param name="Accuracy">Share of rows whose label is the one predicted (1 when p &gt; 0.5).</param>
internal readonly record struct HeldOutScores(double LogLoss, double Brier, double Ece, double Auc, double Accuracy)
{
    /// <summary>Scores <paramref name="probabilities"/> of label 1 against <paramref name="labels"/>.</summary>
    /// <param name="probabilities">Probabilities in [0, 1].</param>
    /// <param name="labels">Labels, 0 or 1, as many as probabilities (at least one).</param>
    /// <exception cref="ArgumentException">Different lengths or no rows.</exception>
    public static HeldOutScores Of(ReadOnlySpan<double> probabilities, ReadOnlySpan<int> labels)
    {
        if (probabilities.Length != labels.Length || labels.Length == 0)
        {
            throw new ArgumentException($"There are {probabilities.Length} probabilities for {labels.Length} labels; give one per label, at least one.", nameof(probabilities));
        }

        var calibration = new CalibrationAccumulator(new BinEdges(10));
        var auc = new RollingAuc(labels.Length);
        int correct = 0;
        for (int i = 0; i < labels.Length; i++)
        {
            calibration.Add(probabilities[i], labels[i]);
            auc.Add(probabilities[i], labels[i]);
            correct += (probabilities[i] > 0.5 ? 1 : 0) == labels[i] ? 1 : 0;
        }

        CalibrationSnapshot s = calibration.Snapshot();
        return new HeldOutScores(s.LogLoss, s.Brier, s.Ece, auc.Value, (double)correct / labels.Length);
    }
}
