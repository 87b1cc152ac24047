namespace Driftline.Core.Fitting;

/// <summary>
/// The fit-and-predict step of a cross-validation for <see cref="LogisticNewtonFit"/> over a
/// dense design: fit on the training rows, return the held-out rows' probabilities.
/// </summary>
internal static class LogisticFoldFit
{
    /// <summary>
    /// A step for <see cref="CrossValidation.Run"/>. A column that is 0 in every training row
    /// (a rare level absent from the training folds) has no estimate; it is left out of that
    /// fold's fit, which predicts as if its weight were 0.
    /// </summary>
    /// <param name="design">Dense rows, no intercept column.</param>
    /// <param name="labels">Each row's label, 0 or 1.</param>
    /// <param name="ridge">L2 penalty, as for the full fit.</param>
    /// <param name="names">One name per column, for messages.</param>
    public static Func<int[], int[], (double[]? Probabilities, string? Problem)> Step(
        IReadOnlyList<double[]> design, IReadOnlyList<int> labels, double ridge, IReadOnlyList<string> names)
    {
        ArgumentNullException.ThrowIfNull(design);
        ArgumentNullException.ThrowIfNull(labels);
        ArgumentNullException.ThrowIfNull(names);
        int width = names.Count;
        return (train, test) =>
        {
            int[] used = Enumerable.Range(0, width).Where(c => train.Any(i => design[i][c] != 0)).ToArray();
            double[][] rows = train.Select(i => used.Select(c => design[i][c]).ToArray()).ToArray();
            double[] y = train.Select(i => (double)labels[i]).ToArray();
            LogisticFitResult fit = LogisticNewtonFit.Fit(rows, y, ridge, featureNames: used.Select(c => names[c]).ToArray());
            if (!fit.Converged)
            {
                return (null, fit.Problem);
            }

            var p = new double[test.Length];
            for (int k = 0; k < test.Length; k++)
            {
                double eta = fit.Intercept;
                double[] row = design[test[k]];
                for (int j = 0; j < used.Length; j++)
                {
                    eta += fit.Coefficients[j] * row[used[j]];
                }

                p[k] = LogisticMath.Probability(eta);
            }

            return (p, null);
        };
    }
}
