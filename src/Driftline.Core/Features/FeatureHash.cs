using System.IO.Hashing;

namespace Driftline.Core.Features;

/// <summary>
/// Hashes feature names and values for the hashing trick (Weinberger, Dasgupta, Langford,
/// Smola &amp; Attenberg 2009, "Feature Hashing for Large Scale Multitask Learning").
/// XXH3 over the UTF-8 bytes: fast, allocation-free, stable across runs and machines, so a
/// saved model means the same thing when it is loaded elsewhere.
/// </summary>
internal static class FeatureHash
{
    /// <summary>Seed for names; values are hashed with their name's hash as the seed.</summary>
    private const long NameSeed = 0x5eed_d1f7;

    /// <summary>Hash of a feature name.</summary>
    public static ulong Name(ReadOnlySpan<byte> utf8Name) => XxHash3.HashToUInt64(utf8Name, NameSeed);

    /// <summary>Hash of a categorical value under its name: the slot of <c>name=value</c>.</summary>
    public static ulong Value(ulong nameHash, ReadOnlySpan<byte> utf8Value) =>
        XxHash3.HashToUInt64(utf8Value, unchecked((long)nameHash));

    /// <summary>Hash of the interaction of two hashed features (order-independent).</summary>
    public static ulong Cross(ulong a, ulong b)
    {
        // Order-independent so ["zone","raining"] and ["raining","zone"] share a slot.
        ulong lo = Math.Min(a, b), hi = Math.Max(a, b);
        return Mix(lo * 0x9E3779B97F4A7C15UL ^ Mix(hi));
    }

    /// <summary>The hash of a feature that the model adds to every event.</summary>
    public static readonly ulong Bias = Name("__bias__"u8);

    /// <summary>Slot index in a table of <paramref name="mask"/> + 1 weights.</summary>
    public static int Slot(ulong hash, int mask) => (int)(hash & (uint)mask);

    /// <summary>The sign of a hashed feature: a bit independent of the slot bits.</summary>
    public static double Sign(ulong hash) => (hash >> 63) == 0 ? 1.0 : -1.0;

    // SplitMix64 finaliser (Steele, Lea & Flood 2014): a cheap full-avalanche mix.
    private static ulong Mix(ulong z)
    {
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        return z ^ (z >> 31);
    }
}
