namespace Driftline.Core.Fitting;

/// <summary>
/// Repeated stratified k-fold cross-validation of a binary or K-class model: each repetition
/// draws new stratified folds; each fold is held out once while the model is fitted on the
/// others, and its held-out figures are compared with the class prior of the same training rows
/// with Laplace's correction, (n_k + 1) / (N + K) (Laplace's rule of succession; a fact of the trade).
/// </summary>
internal static class CrossValidation
{
    /// <summary>The fold assignments of every repetition: repetition r uses a shuffle seeded by <paramref name="seed"/> and drawn after the earlier ones.</summary>
    /// <param name="labels">Each row's label.</param>
    /// <param name="folds">Folds per repetition, at least 2 and at most the rows of the rarer label.</param>
    /// <param name="repeats">Repetitions, at least 1.</param>
    /// <param name="seed">The seed; the same seed gives the same folds.</param>
    /// <exception cref="ArgumentOutOfRangeException">A count is out of range.</exception>
    public static int[][] Assignments(IReadOnlyList<int> labels, int folds, int repeats, int seed)
    {
        ArgumentNullException.ThrowIfNull(labels);
        ArgumentOutOfRangeException.ThrowIfLessThan(repeats, 1);
        var random = new Random(seed);
        return Enumerable.Range(0, repeats).Select(_ => StratifiedFolds.Assign(labels, folds, random)).ToArray();
    }

    /// <summary>Runs the cross-validation over given fold assignments.</summary>
    /// <param name="labels">Each row's label: 0 or 1, or a class index below <paramref name="classCount"/>.</param>
    /// <param name="assignments">Per repetition, each row's fold in [0, folds).</param>
    /// <param name="seed">Recorded in the result.</param>
    /// <param name="fitAndPredict">
    /// Fits on the training rows and returns, for the test rows in their order, the probability
    /// of label 1 (binary) or the K class probabilities row by row (K above 2); or null and a
    /// problem in words when the fit fails.
    /// </param>
    /// <param name="problem">Null on success; otherwise which fold failed and why.</param>
    /// <param name="classCount">K: 2 (the default) for binary labels 0 and 1.</param>
    /// <returns>The result, or null when a fold's fit failed.</returns>
    public static CrossValidationResult? Run(
        IReadOnlyList<int> labels,
        IReadOnlyList<int[]> assignments,
        int seed,
        Func<int[], int[], (double[]? Probabilities, string? Problem)> fitAndPredict,
        out string? problem,
        int classCount = 2)
    {
        ArgumentNullException.ThrowIfNull(labels);
        ArgumentNullException.ThrowIfNull(assignments);
        ArgumentNullException.ThrowIfNull(fitAndPredict);
        int folds = assignments.Count == 0 ? 0 : assignments[0].Max() + 1;
        var results = new List<CrossValidationFold>();
        for (int r = 0; r < assignments.Count; r++)
        {
            int[] assignment = assignments[r];
            for (int f = 0; f < folds; f++)
            {
                int[] test = Enumerable.Range(0, labels.Count).Where(i => assignment[i] == f).ToArray();
                int[] train = Enumerable.Range(0, labels.Count).Where(i => assignment[i] != f).ToArray();
                var (probabilities, why) = fitAndPredict(train, test);
                if (probabilities is null)
                {
                    problem = $"repetition {r + 1}, fold {f + 1}: {why}";
                    return null;
                }

                int[] y = test.Select(i => labels[i]).ToArray();
                if (classCount == 2)
                {
                    double prior = (train.Sum(i => labels[i]) + 1.0) / (train.Length + 2.0);
                    var priorP = new double[test.Length];
                    Array.Fill(priorP, prior);
                    results.Add(new CrossValidationFold(r, f, test.Length, HeldOutScores.Of(probabilities, y), HeldOutScores.Of(priorP, y)));
                    continue;
                }

                var counts = new double[classCount];
                foreach (int i in train)
                {
                    counts[labels[i]]++;
                }

                var priorRows = new double[test.Length * classCount];
                for (int t = 0; t < test.Length; t++)
                {
                    for (int k = 0; k < classCount; k++)
                    {
                        priorRows[(t * classCount) + k] = (counts[k] + 1.0) / (train.Length + classCount);
                    }
                }

                results.Add(new CrossValidationFold(r, f, test.Length,
                    HeldOutScores.OfClasses(probabilities, y, classCount), HeldOutScores.OfClasses(priorRows, y, classCount)));
            }
        }

        problem = null;
        return new CrossValidationResult(folds, assignments.Count, seed, results);
    }
}
