using Driftline.Core.Metrics;

namespace Driftline.Core.Fitting;

/// <summary>Figures of probabilities on held-out rows.</summary>
/// <param name="LogLoss">Mean negative log-likelihood of the true label, natural log, p clipped as <see cref="PredictionScores.LogLoss"/> does.</param>
/// <param name="Brier">Mean (p − y)² (Brier 1950); for K classes summed over the classes, Σ_k (p_k − [y = k])², 0 to 2.</param>
/// <param name="Ece">
/// Expected calibration error over 10 equal-width left-closed bins (Naeini, Cooper &amp;
/// Hauskrecht 2015); for K classes the top-label (confidence) ECE: the most probable class's
/// probability against whether it was right (Guo et al. 2017).
/// </param>
/// <param name="Auc">Area under the ROC curve, ties counting half; NaN when the rows hold one label only, and for K classes.</param>
/// <param name="Accuracy">Share of rows whose label is the one predicted (binary: 1 when p &gt; 0.5; K classes: the most probable, the first on a tie).</param>
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

    /// <summary>Scores K-class probabilities (row by row, K per row) against class indexes.</summary>
    /// <param name="probabilities">Row-major, <paramref name="classCount"/> per row, each row summing to 1.</param>
    /// <param name="labels">Each row's class in [0, K).</param>
    /// <param name="classCount">K, at least 2.</param>
    /// <exception cref="ArgumentException">Lengths that do not match, or no rows.</exception>
    public static HeldOutScores OfClasses(ReadOnlySpan<double> probabilities, ReadOnlySpan<int> labels, int classCount)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(classCount, 2);
        if (probabilities.Length != labels.Length * classCount || labels.Length == 0)
        {
            throw new ArgumentException($"There are {probabilities.Length} probabilities for {labels.Length} labels of {classCount} classes; give K per label, at least one label.", nameof(probabilities));
        }

        // The top label's confidence against whether it was right: a binary calibration problem.
        var top = new CalibrationAccumulator(new BinEdges(10));
        double logLoss = 0;
        double brier = 0;
        int correct = 0;
        for (int i = 0; i < labels.Length; i++)
        {
            ReadOnlySpan<double> p = probabilities.Slice(i * classCount, classCount);
            int best = 0;
            for (int k = 0; k < classCount; k++)
            {
                double d = p[k] - (k == labels[i] ? 1 : 0);
                brier += d * d;
                best = p[k] > p[best] ? k : best;
            }

            logLoss += PredictionScores.LogLoss(p[labels[i]], 1);
            correct += best == labels[i] ? 1 : 0;
            top.Add(p[best], best == labels[i] ? 1 : 0);
        }

        int n = labels.Length;
        return new HeldOutScores(logLoss / n, brier / n, top.Snapshot().Ece, double.NaN, (double)correct / n);
    }
}
