namespace Driftline.Core.Metrics;

/// <summary>
/// Exact running sums for add-and-evict windows: each term is rounded once to a multiple of
/// 2^-64 and the multiples are summed in 128-bit integers.
/// </summary>
/// <remarks>
/// <para>
/// Why not compensated floating-point sums (Neumaier 1974, "Rundungsfehleranalyse einiger Verfahren
/// zur Summation endlicher Summen")? They make drift small but not zero, and the low bits of
/// the result depend on the whole history of adds and evictions, so a window rebuilt from its
/// contents would differ from the live one it was saved from. Integer sums are associative: after
/// an evict the sum is bit for bit what it would be had the evicted term never been added, the
/// state of a window is a function of its contents alone, and a restored window continues
/// identically. This is the fixed-point "long accumulator" of Kulisch and Miranker (1981,
/// "Computer Arithmetic in Theory and Practice"), cut down to the range these terms need.
/// </para>
/// <para>
/// Cost of the rounding: at most 2^-64 ≈ 5.4e-20 per term, toward zero, far below the
/// 1.1e-16 relative resolution of the double the mean is reported in. Range: terms are bounded
/// by <see cref="MaxTerm"/> (log-loss terms are at most 36.05), so a sum of 2^57 terms cannot
/// overflow, which is why the running sums add without overflow checks.
/// </para>
/// </remarks>
internal static class FixedPoint
{
    /// <summary>Number of fractional bits: a raw value of 1 stands for 2^-64.</summary>
    public const int FractionBits = 64;

    /// <summary>Largest term magnitude accepted, 64 (log-loss terms are at most 36.05, probabilities at most 1).</summary>
    public const double MaxTerm = 64.0;

    private const double Scale = 18446744073709551616.0; // 2^64, exact
    private const double InverseScale = 1.0 / Scale;     // 2^-64, exact

    /// <summary>The raw fixed-point value of 1.</summary>
    public static Int128 One => Int128.One << FractionBits;

    /// <summary>Rounds <paramref name="term"/> toward zero to a multiple of 2^-64.</summary>
    /// <remarks>Deterministic: the same double always gives the same raw value, which is what lets an evict cancel its add exactly.</remarks>
    public static Int128 FromDouble(double term)
    {
        System.Diagnostics.Debug.Assert(double.IsFinite(term) && Math.Abs(term) <= MaxTerm, "term out of fixed-point range");
        if (term >= 0)
        {
            // The same value as the conversion below, in two machine conversions instead of the
            // general 128-bit one: the integer part is exact, the fraction below it is exact
            // (both are representable), and fraction · 2^64 is exact and below 2^64, so
            // truncating it truncates term · 2^64. Every term the windows sum is non-negative.
            ulong whole = (ulong)term;
            return new Int128(whole, (ulong)((term - whole) * Scale));
        }
        // Multiplying by a power of two is exact; the conversion truncates the fraction.
        return (Int128)(term * Scale);
    }

    /// <summary>The raw value for an integer count, exact.</summary>
    public static Int128 FromCount(long count) => (Int128)count << FractionBits;

    /// <summary>The nearest double to a raw value.</summary>
    public static double ToDouble(Int128 raw) => (double)raw * InverseScale;
}
