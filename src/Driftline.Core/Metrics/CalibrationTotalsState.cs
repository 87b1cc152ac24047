namespace Driftline.Core.Metrics;

/// <summary>
/// The saved form of <see cref="CalibrationTotals"/>: its raw running sums. Whole-run totals keep
/// no individual predictions, so the sums are the state.
/// </summary>
/// <param name="Bins">Number of equal-width reliability bins.</param>
/// <param name="Count">Graded predictions counted.</param>
/// <param name="Positives">Of those, outcomes equal to 1.</param>
/// <param name="LogLossSum">Sum of log-loss terms, in <see cref="FixedPoint"/> units of 2^-64.</param>
/// <param name="SquaredErrorSum">Sum of (p − y)², in units of 2^-64.</param>
/// <param name="ProbabilitySum">Sum of p, in units of 2^-64.</param>
/// <param name="BinCounts">Predictions per bin, length <paramref name="Bins"/>.</param>
/// <param name="BinPositives">Positives per bin, length <paramref name="Bins"/>.</param>
/// <param name="BinProbabilitySums">Sum of p per bin in units of 2^-64, length <paramref name="Bins"/>.</param>
/// <remarks>
/// The raw integers are saved rather than doubles so that a restored total continues bit for bit
/// as the saved one would have. The 2^-64 unit (<see cref="FixedPoint.FractionBits"/>) is part of
/// the format. Equality of two states compares the arrays by reference, as records do.
/// </remarks>
internal sealed record CalibrationTotalsState(
    int Bins,
    long Count,
    long Positives,
    Int128 LogLossSum,
    Int128 SquaredErrorSum,
    Int128 ProbabilitySum,
    long[] BinCounts,
    long[] BinPositives,
    Int128[] BinProbabilitySums)
{
    /// <summary>Sum of p(1 − p) in units of 2^-64, for the calibration z-score (0 in snapshots that predate it).</summary>
    public Int128 VarianceSum { get; init; }

    /// <summary>
    /// Describes the first way the sums contradict each other, or returns null when they are
    /// consistent (a corrupt or hand-edited snapshot must not be restored silently).
    /// </summary>
    internal string? FindInconsistency()
    {
        if (Bins < 1)
        {
            return $"{nameof(Bins)} is {Bins}, must be at least 1";
        }

        if (BinCounts is null || BinPositives is null || BinProbabilitySums is null)
        {
            return "a per-bin array is missing";
        }

        if (BinCounts.Length != Bins || BinPositives.Length != Bins || BinProbabilitySums.Length != Bins)
        {
            return $"per-bin arrays must each have {Bins} elements";
        }

        if (Count < 0 || Positives < 0 || Positives > Count)
        {
            return $"{nameof(Positives)} ({Positives}) must lie between 0 and {nameof(Count)} ({Count})";
        }

        if (LogLossSum < 0 || SquaredErrorSum < 0 || SquaredErrorSum > FixedPoint.FromCount(Count)
            || ProbabilitySum < 0 || ProbabilitySum > FixedPoint.FromCount(Count))
        {
            return "a sum is negative or larger than its terms allow";
        }

        long countTotal = 0;
        long positiveTotal = 0;
        Int128 probabilityTotal = 0;
        for (int k = 0; k < Bins; k++)
        {
            if (BinCounts[k] < 0 || BinPositives[k] < 0 || BinPositives[k] > BinCounts[k]
                || BinProbabilitySums[k] < 0 || BinProbabilitySums[k] > FixedPoint.FromCount(BinCounts[k]))
            {
                return $"bin {k} has impossible counts or sums";
            }

            countTotal += BinCounts[k];
            positiveTotal += BinPositives[k];
            probabilityTotal += BinProbabilitySums[k];
        }

        if (countTotal != Count || positiveTotal != Positives || probabilityTotal != ProbabilitySum)
        {
            return "per-bin counts or sums do not add up to the totals";
        }

        return null;
    }
}
