using System.Runtime.CompilerServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// Unsigned integers in seven bits a byte, low group first, the high bit of each byte saying
/// another follows (the base-128 varint of Protocol Buffers): a count under 128 takes one byte.
/// </summary>
internal static class Varint
{
    /// <summary>Bytes <paramref name="value"/> takes.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static int Size(uint value) => value < 1u << 7 ? 1 : value < 1u << 14 ? 2 : value < 1u << 21 ? 3 : value < 1u << 28 ? 4 : 5;

    /// <summary>Writes <paramref name="value"/> at <paramref name="pos"/>; returns the position after it.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static int Write(Span<byte> into, int pos, uint value)
    {
        while (value >= 0x80)
        {
            into[pos++] = (byte)(value | 0x80);
            value >>= 7;
        }
        into[pos++] = (byte)value;
        return pos;
    }

    /// <summary>Reads the value at <paramref name="pos"/>; <paramref name="size"/> is its length in bytes.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static uint Read(ReadOnlySpan<byte> from, int pos, out int size)
    {
        uint value = 0;
        int shift = 0;
        int start = pos;
        byte b;
        do
        {
            b = from[pos++];
            value |= (uint)(b & 0x7F) << shift;
            shift += 7;
        }
        while (b >= 0x80);
        size = pos - start;
        return value;
    }
}
