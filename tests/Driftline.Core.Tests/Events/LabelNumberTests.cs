using System.Numerics;
using System.Text;
using CsCheck;
using Driftline.Core.Events;
using Xunit;

namespace Driftline.Core.Tests.Events;

public sealed class LabelNumberTests
{
    // JSON numbers by the RFC 8259 section 6 grammar, biased towards values at or near 0 and 1.
    private static readonly Gen<(bool Negative, string Integer, string Fraction, int? Exponent)> Numbers =
        from negative in Gen.Bool
        from integer in Gen.OneOf(Gen.Const("0"), Gen.Const("1"), Gen.Const("10"), Gen.Const("100"), Gen.Int[1, 999].Select(i => i.ToString(System.Globalization.CultureInfo.InvariantCulture)))
        from fraction in Gen.OneOf(Gen.Const(""), Gen.Const("0"), Gen.Const("000"), Gen.String[Gen.Char["0"], 1, 30], Gen.String[Gen.Char['0', '9'], 1, 30], Gen.String[Gen.Char["0"], 0, 25].Select(z => z + "1"))
        from exponent in Gen.OneOf(Gen.Const((int?)null), Gen.Int[-40, 40].Select(e => (int?)e))
        select (negative, integer, fraction, exponent);

    private static string Text((bool Negative, string Integer, string Fraction, int? Exponent) n) =>
        (n.Negative ? "-" : "") + n.Integer + (n.Fraction.Length > 0 ? "." + n.Fraction : "") + (n.Exponent is int e ? "e" + e.ToString(System.Globalization.CultureInfo.InvariantCulture) : "");

    // The reference: the number's exact value as integer mantissa times a power of ten, in BigInteger arithmetic.
    private static int Reference((bool Negative, string Integer, string Fraction, int? Exponent) n)
    {
        var mantissa = BigInteger.Parse(n.Integer + n.Fraction, System.Globalization.CultureInfo.InvariantCulture);
        if (mantissa.IsZero)
        {
            return 0;
        }
        if (n.Negative)
        {
            return -1;
        }
        int power = (n.Exponent ?? 0) - n.Fraction.Length;
        bool one = power >= 0 ? mantissa * BigInteger.Pow(10, power) == BigInteger.One : mantissa == BigInteger.Pow(10, -power);
        return one ? 1 : -1;
    }

    [Fact]
    public void Exact_AnyJsonNumber_AgreesWithExactArithmetic()
    {
        Numbers.Sample(n => Assert.Equal(Reference(n), LabelNumber.Exact(Encoding.ASCII.GetBytes(Text(n)))), iter: 20_000);
    }
}
