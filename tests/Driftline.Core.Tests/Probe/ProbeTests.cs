using Driftline.Core.Probe;
using Xunit;

namespace Driftline.Core.Tests.Probe;

public sealed class ProbeTests
{
    [Fact]
    public void Two_Always_IsTwo() => Assert.Equal(2, Driftline.Core.Probe.Probe.Two());
}
