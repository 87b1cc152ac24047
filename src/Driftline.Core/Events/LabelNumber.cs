namespace Driftline.Core.Events;

/// <summary>
/// Reads a JSON number token (RFC 8259 section 6 grammar, already checked by the reader) as a
/// binary label only when its decimal value is exactly 0 or 1. Reading it as a double first
/// would let <c>1e-400</c> underflow to 0 and <c>1.00000000000000000001</c> round to 1.
/// </summary>
internal static class LabelNumber
{
    /// <summary>0 or 1 when <paramref name="text"/> is exactly that value (<c>0</c>, <c>-0</c>, <c>1.0</c>, <c>10e-1</c>, ...), otherwise -1.</summary>
    public static int Exact(ReadOnlySpan<byte> text)
    {
        bool negative = !text.IsEmpty && text[0] == (byte)'-';
        int i = negative ? 1 : 0;
        int digits = 0;
        int integerDigits = -1;
        int firstNonZero = -1;
        int lastNonZero = -1;
        byte firstDigit = 0;
        for (; i < text.Length && text[i] is not ((byte)'e' or (byte)'E'); i++)
        {
            if (text[i] == (byte)'.')
            {
                integerDigits = digits;
                continue;
            }
            if (text[i] != (byte)'0')
            {
                if (firstNonZero < 0)
                {
                    firstNonZero = digits;
                    firstDigit = text[i];
                }
                lastNonZero = digits;
            }
            digits++;
        }
        if (integerDigits < 0)
        {
            integerDigits = digits;
        }
        if (firstNonZero < 0)
        {
            return 0;
        }
        if (negative || firstNonZero != lastNonZero || firstDigit != (byte)'1')
        {
            return -1;
        }
        // The one significant digit is a 1 at 10^(integerDigits - 1 - firstNonZero + exponent).
        long exponent = 0;
        if (i < text.Length)
        {
            i++;
            bool negativeExponent = i < text.Length && text[i] == (byte)'-';
            if (i < text.Length && text[i] is (byte)'-' or (byte)'+')
            {
                i++;
            }
            for (; i < text.Length; i++)
            {
                // Past a few digits the value is far from 1 whatever the rest says.
                exponent = Math.Min(exponent * 10 + (text[i] - (byte)'0'), 1_000_000_000);
            }
            if (negativeExponent)
            {
                exponent = -exponent;
            }
        }
        return integerDigits - 1 - firstNonZero + exponent == 0 ? 1 : -1;
    }
}
