namespace Driftline.Core.Probe;

internal static class Probe
{
    public static int Two() => 2;
}
