namespace Driftline.Core.Fitting;

/// <summary>
/// The fit-and-predict step of a K-class cross-validation for <see cref="MultinomialNewtonFit"/>
/// over a dense design: fit on the training rows, return the held-out rows' class probabilities.
/// </summary>
internal static class MultinomialFoldFit
{
    /// <summary>
    /// A step for <see cref="CrossValidation.Run"/> with K classes. A column that is 0 in every
    /// training row has no estimate; it is left out of that fold's fit (weight 0).
    /// </summary>
    /// <param name="design">Dense rows, no intercept column.</param>
    /// <param name="labels">Each row's class index.</param>
    /// <param name="classCount">K.</param>
    /// <param name="ridge">L2 penalty, as for the full fit.</param>
    /// <param name="names">One name per column, for messages.</param>
    public static Func<int[], int[], (double[]? Probabilities, string? Problem)> Step(
        IReadOnlyList<double[]> design, IReadOnlyList<int> labels, int classCount, double ridge, IReadOnlyList<string> names)
    {
        ArgumentNullException.ThrowIfNull(design);
        ArgumentNullException.ThrowIfNull(labels);
        ArgumentNullException.ThrowIfNull(names);
        int width = names.Count;
        return (train, test) =>
        {
            int[] used = Enumerable.Range(0, width).Where(c => train.Any(i => design[i][c] != 0)).ToArray();
            double[][] rows = train.Select(i => used.Select(c => design[i][c]).ToArray()).ToArray();
            MultinomialFitResult fit = MultinomialNewtonFit.Fit(rows, train.Select(i => labels[i]).ToArray(), classCount, ridge,
                used.Select(c => names[c]).ToArray());
            if (!fit.Converged)
            {
                return (null, fit.Problem);
            }

            var p = new double[test.Length * classCount];
            var x = new double[used.Length];
            for (int t = 0; t < test.Length; t++)
            {
                double[] row = design[test[t]];
                for (int j = 0; j < used.Length; j++)
                {
                    x[j] = row[used[j]];
                }

                fit.Predict(x, p.AsSpan(t * classCount, classCount));
            }

            return (p, null);
        };
    }
}
