namespace Driftline.Kafka.Tests.Support;

/// <summary>
/// The tests that run several driftline processes at once share one collection, so they run
/// one after another: side by side on 2 cores they starved each other's heartbeats (1.5 s
/// sessions) and members fell out of their groups.
/// </summary>
[Xunit.CollectionDefinition(Name)]
public sealed class RealProcesses
{
    public const string Name = "real driftline processes";
}
