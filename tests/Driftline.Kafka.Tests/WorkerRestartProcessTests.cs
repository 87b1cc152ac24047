using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>Issue 12, item 14: how long a cleanly stopped worker waits for its partitions when it starts again.</summary>
[Collection(RealProcesses.Name)]
public sealed class WorkerRestartProcessTests
{
    private const int Partitions = 16;

    [Theory]
    [InlineData("classic")]
    [InlineData("consumer")]
    public void Run_CleanStopThenRestart_PartitionsBackWithinFiveSeconds(string protocol)
    {
        using var cluster = new MockCluster();
        // The mock's first-join delay is 200 ms here: its 3 s default outlasts a 1.5 s session, and the
        // member then times out of its own first join.
        // Classic: the client's session timeout of 45 s made the mock wait 43.8 s (see the Kafka README); 1.5 s here.
        // The consumer protocol's session timeout is the broker's, so it takes no client setting.
        var client = protocol == "classic" ? new Dictionary<string, string>(WorkerGroupProcessTests.Detect) : [];
        client["group.protocol"] = protocol;
        using var group = new WorkerGroup(cluster, "gr" + protocol, Partitions, client);
        var records = TestStream.Generate(4_000, keys: 64, seed: 81);
        int events = records.Count(r => !r.IsLabel);
        Topics.ProduceStream(cluster.Bootstrap, group.EventsTopic, group.LabelsTopic, records);

        var first = group.Start();
        Assert.True(group.WaitForCheckpointedLabels(events, TimeSpan.FromSeconds(60)), "the first run did not finish\n" + group.Timeline());
        Assert.Equal(0, first.Terminate(TimeSpan.FromSeconds(10)));
        var waitedFirst = first.FirstOwned!.Value - first.JoinedAt!.Value;

        var second = group.Start();
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        while (second.FirstOwned is null && DateTime.UtcNow < deadline)
        {
            Assert.False(second.HasExited, "the restarted worker exited:\n" + second.Errors);
            Thread.Sleep(20);
        }
        Assert.NotNull(second.FirstOwned);
        var waited = second.FirstOwned!.Value - second.JoinedAt!.Value;
        TestContext.Current.TestOutputHelper?.WriteLine($"[measured] {protocol}: first start waited {waitedFirst.TotalSeconds:0.0} s, restart after a clean stop waited {waited.TotalSeconds:0.0} s for its first partition");
        Assert.Equal(0, second.Terminate(TimeSpan.FromSeconds(10)));
        Assert.True(waited <= TimeSpan.FromSeconds(5), $"{protocol}: the restarted worker waited {waited.TotalSeconds:0.0} s for its first partition\n{second.Errors}");
    }
}
