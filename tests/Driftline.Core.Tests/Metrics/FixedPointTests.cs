using CsCheck;
using Driftline.Core.Metrics;
using Xunit;

namespace Driftline.Core.Tests.Metrics;

/// <summary>
/// The fast conversion of a term to fixed point against the BCL's general double-to-Int128
/// conversion of the exactly scaled value (System.Int128 is the reference).
/// </summary>
public sealed class FixedPointTests
{
    private static readonly Gen<double> Terms = Gen.OneOf(
        Gen.Double[0.0, FixedPoint.MaxTerm],
        Gen.Double[0.0, 1.0],
        Gen.Double[-FixedPoint.MaxTerm, 0.0],
        Gen.Const(0.0), Gen.Const(1.0), Gen.Const(FixedPoint.MaxTerm), Gen.Const(double.Epsilon),
        Gen.Const(1.0 - 1e-16), Gen.Const(36.04365338911715));

    [Fact]
    public void FromDouble_AnyTerm_EqualsTheTruncatedScaledValue()
    {
        Terms.Sample(term => Assert.Equal((Int128)(term * 18446744073709551616.0), FixedPoint.FromDouble(term)));
    }
}
