namespace Driftline.Core.Fitting;

/// <summary>
/// Checks a caller's input to <see cref="LogisticNewtonFit"/> and turns it into the plain
/// arrays <see cref="LogisticLikelihood"/> works on. Every failure is an argument exception
/// that names the parameter and, where there is one, the row.
/// </summary>
internal static class LogisticFitInput
{
    /// <summary>One design row: 1 for the intercept, then the features.</summary>
    /// <param name="row">The row's features; each must be finite.</param>
    /// <param name="index">The row's position, for the message.</param>
    /// <param name="parameterName">The caller's parameter holding the rows.</param>
    /// <returns>A new array one longer than <paramref name="row"/>.</returns>
    /// <exception cref="ArgumentException">A feature is NaN or infinite.</exception>
    public static double[] DesignRow(double[] row, int index, string parameterName)
    {
        var withIntercept = new double[row.Length + 1];
        withIntercept[0] = 1.0;
        for (int j = 0; j < row.Length; j++)
        {
            if (!double.IsFinite(row[j]))
            {
                throw new ArgumentException($"Feature {j} of row {index} is {row[j]}; features must be finite numbers.", parameterName);
            }

            withIntercept[j + 1] = row[j];
        }

        return withIntercept;
    }

    /// <summary>A copy of the labels after checking there is one per row, each 0 or 1.</summary>
    /// <param name="labels">The caller's labels.</param>
    /// <param name="rowCount">The number of rows.</param>
    /// <returns>The labels as an array.</returns>
    /// <exception cref="ArgumentException">Wrong count, or a label other than 0 or 1.</exception>
    public static double[] Labels(IReadOnlyList<double> labels, int rowCount)
    {
        ArgumentNullException.ThrowIfNull(labels);
        if (labels.Count != rowCount)
        {
            throw new ArgumentException($"There are {labels.Count} labels for {rowCount} rows; each row needs one label.", nameof(labels));
        }

        var y = new double[rowCount];
        for (int i = 0; i < rowCount; i++)
        {
            double label = labels[i];
            if (label != 0 && label != 1)
            {
                throw new ArgumentException($"Label {i} is {label}; labels must be 0 or 1.", nameof(labels));
            }

            y[i] = label;
        }

        return y;
    }

    /// <summary>A copy of the weights after checking them; every row 1 when there are none.</summary>
    /// <param name="weights">The caller's weights, or null.</param>
    /// <param name="rowCount">The number of rows.</param>
    /// <returns>The weights as an array.</returns>
    /// <exception cref="ArgumentException">Wrong count, a weight below 0 or not finite, or every weight 0.</exception>
    public static double[] Weights(IReadOnlyList<double>? weights, int rowCount)
    {
        var v = new double[rowCount];
        if (weights is null)
        {
            Array.Fill(v, 1.0);
            return v;
        }

        if (weights.Count != rowCount)
        {
            throw new ArgumentException($"There are {weights.Count} weights for {rowCount} rows; give one weight per row or none.", nameof(weights));
        }

        bool anyPositive = false;
        for (int i = 0; i < rowCount; i++)
        {
            double weight = weights[i];
            if (!(weight >= 0) || double.IsPositiveInfinity(weight))
            {
                throw new ArgumentException($"Weight {i} is {weight}; weights must be finite numbers ≥ 0.", nameof(weights));
            }

            anyPositive |= weight > 0;
            v[i] = weight;
        }

        if (!anyPositive)
        {
            throw new ArgumentException("Every weight is 0; at least one row needs a positive weight.", nameof(weights));
        }

        return v;
    }

    /// <summary>A copy of the starting point after checking it, or null for the default start.</summary>
    /// <param name="start">The caller's start, intercept first, or null.</param>
    /// <param name="width">The number of parameters, intercept included.</param>
    /// <returns>The start as an array, or null.</returns>
    /// <exception cref="ArgumentException">Wrong length or a value that is not finite.</exception>
    public static double[]? Start(IReadOnlyList<double>? start, int width)
    {
        if (start is null)
        {
            return null;
        }

        if (start.Count != width)
        {
            throw new ArgumentException(
                $"The start has {start.Count} values; it needs {width}: the intercept, then one per feature.", nameof(start));
        }

        var values = new double[width];
        for (int j = 0; j < width; j++)
        {
            if (!double.IsFinite(start[j]))
            {
                throw new ArgumentException($"Start value {j} is {start[j]}; start values must be finite.", nameof(start));
            }

            values[j] = start[j];
        }

        return values;
    }

    /// <summary>Checks the fit's settings.</summary>
    /// <param name="ridge">Must be finite and ≥ 0.</param>
    /// <param name="tolerance">Must be above 0 and below 1.</param>
    /// <param name="maxIterations">Must be at least 1.</param>
    /// <exception cref="ArgumentOutOfRangeException">A setting is out of range; the message says the range.</exception>
    public static void CheckSettings(double ridge, double tolerance, int maxIterations)
    {
        if (!(ridge >= 0) || double.IsPositiveInfinity(ridge))
        {
            throw new ArgumentOutOfRangeException(nameof(ridge), ridge, "The ridge (L2) penalty must be a finite number ≥ 0; 0 means none.");
        }

        if (!(tolerance > 0 && tolerance < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(tolerance), tolerance, "The tolerance must be above 0 and below 1; the default is 1e-10.");
        }

        if (maxIterations < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(maxIterations), maxIterations, "The iteration limit must be at least 1; the default is 100.");
        }
    }
}
