using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>
/// Real <c>driftline run</c> processes in one consumer group on the mock cluster (issue 15):
/// 16 events partitions, 16 co-partitioned labels partitions, half the labels late.
/// </summary>
public sealed class WorkerGroupProcessTests
{
    private const int Partitions = 16;
    private const int Keys = 64;

    [Theory]
    [InlineData(1, null)]
    [InlineData(2, null)]
    [InlineData(3, null)]
    public void Run_WorkersInOneGroup_SplitEvenlyPredictEveryIdAndStopOnSigterm(int workers, string? protocol)
    {
        using var cluster = new MockCluster();
        using var group = new WorkerGroup(cluster, $"gp{workers}", Partitions, protocol is null ? null : new Dictionary<string, string> { ["group.protocol"] = protocol });
        var records = TestStream.Generate(20_000, Keys, seed: 40 + workers);
        int events = records.Count(r => !r.IsLabel);
        for (int i = 0; i < workers; i++)
        {
            group.Start();
        }
        // Spread: every partition owned once, the counts at most one apart, each member owning some within 5 s of its start.
        var split = group.WaitForSplit(s => s.Max() - s.Min() <= 1, TimeSpan.FromSeconds(30), TimeSpan.FromSeconds(1));
        TestContext.Current.SendDiagnosticMessage($"{workers} workers: split {string.Join("/", split)}; first partitions after {string.Join(", ", group.Members.Select(m => $"{(m.FirstOwned!.Value - m.JoinedAt!.Value).TotalSeconds:0.0} s"))}");
        foreach (var m in group.Members)
        {
            Assert.True(m.FirstOwned!.Value - m.JoinedAt!.Value <= TimeSpan.FromSeconds(5), $"a member owned its first partition {(m.FirstOwned.Value - m.JoinedAt.Value).TotalSeconds:0.0} s after it started");
        }

        Topics.ProducePaced(cluster.Bootstrap, group.EventsTopic, group.LabelsTopic, records, eventsPerSecond: 10_000, TestContext.Current.CancellationToken);
        var predictions = Topics.ReadTimed(cluster.Bootstrap, group.PredictionsTopic, events, TimeSpan.FromSeconds(60));
        int predicted = predictions.Select(p => p.Id).Distinct().Count();
        Assert.True(predicted == events, $"{events - predicted} of {events} ids never predicted\n" + string.Join("\n----\n", group.Members.Select(m => m.Errors)));
        Assert.True(group.WaitForCheckpointedLabels(events, TimeSpan.FromSeconds(30)), "not every label was joined and checkpointed\n" + group.Timeline());

        foreach (var m in group.Members)
        {
            var clock = System.Diagnostics.Stopwatch.StartNew();
            int exit = m.Terminate(TimeSpan.FromSeconds(10));
            Assert.True(exit == 0, $"exit code {exit} after SIGTERM:\n{m.Errors}");
            TestContext.Current.SendDiagnosticMessage($"stopped in {clock.Elapsed.TotalSeconds:0.0} s");
        }
        AssertAllCheckpointed(group, events);
    }

    [Fact]
    public void Run_MembersJoinAndLeaveUnderLoad_EveryIdPredictedAndThePauseIsShort()
    {
        using var cluster = new MockCluster();
        using var group = new WorkerGroup(cluster, "gm", Partitions, Detect);
        var records = TestStream.Generate(20_000, Keys, seed: 61);
        int events = records.Count(r => !r.IsLabel);
        var a = group.Start();
        group.WaitForSplit(s => true, TimeSpan.FromSeconds(30), TimeSpan.Zero);

        // A live feed of 10 s; a member joins at 2 s and at 4.5 s, and one leaves cleanly at 7 s.
        var feed = new Thread(() => Topics.ProducePaced(cluster.Bootstrap, group.EventsTopic, group.LabelsTopic, records, eventsPerSecond: 2_000));
        feed.Start();
        var clock = System.Diagnostics.Stopwatch.StartNew();
        WaitUntil(clock, 2.0);
        var b = group.Start();
        WaitUntil(clock, 4.5);
        group.Start();
        WaitUntil(clock, 7.0);
        Assert.Equal(0, b.Terminate(TimeSpan.FromSeconds(10)));
        feed.Join();

        var predictions = Topics.ReadTimed(cluster.Bootstrap, group.PredictionsTopic, events, TimeSpan.FromSeconds(60));
        int predicted = predictions.Select(p => p.Id).Distinct().Count();
        Assert.True(predicted == events, $"{events - predicted} of {events} ids never predicted\n" + group.Timeline());
        var (gap, key, at) = LongestGap(predictions);
        TestContext.Current.SendDiagnosticMessage($"longest gap in one key's predictions: {gap.TotalSeconds:0.00} s (key {key}, at {at:HH:mm:ss.fff})");
        Console.WriteLine($"[measured] membership changes under load: longest gap in one key's predictions {gap.TotalSeconds:0.00} s (key {key}, until {at:HH:mm:ss.fff})");
        Assert.True(group.WaitForCheckpointedLabels(events, TimeSpan.FromSeconds(30)), "not every label was joined and checkpointed\n" + group.Timeline());
        foreach (var m in group.Members.Where(m => !m.HasExited))
        {
            Assert.Equal(0, m.Terminate(TimeSpan.FromSeconds(10)));
        }
        AssertAllCheckpointed(group, events);
        Assert.True(gap <= TimeSpan.FromSeconds(3), $"key {key} had no prediction for {gap.TotalSeconds:0.00} s until {at:HH:mm:ss.fff}\n{group.Timeline()}");
    }

    /// <summary>A member that died is noticed after 3 s, not the client's default 45 s (an operator's setting).</summary>
    private static readonly Dictionary<string, string> Detect = new() { ["session.timeout.ms"] = "1500", ["heartbeat.interval.ms"] = "150" };

    private static void WaitUntil(System.Diagnostics.Stopwatch clock, double seconds)
    {
        var left = TimeSpan.FromSeconds(seconds) - clock.Elapsed;
        if (left > TimeSpan.Zero)
        {
            Thread.Sleep(left);
        }
    }

    /// <summary>
    /// The longest time one model key went without a new prediction while the feed ran (each
    /// key lives on one partition, and the feed gives every key an event about every 32 ms), by
    /// the time the worker produced each prediction.
    /// </summary>
    private static (TimeSpan Gap, string Key, DateTime At) LongestGap(List<(int Partition, long Offset, long TimestampMs, string Id, string Value)> predictions)
    {
        var best = (TimeSpan.Zero, "", DateTime.MinValue);
        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (var byKey in predictions.OrderBy(p => p.TimestampMs).Where(p => seen.Add(p.Id)).GroupBy(p => System.Text.Json.JsonDocument.Parse(p.Value).RootElement.GetProperty("key").GetString()!))
        {
            long previous = -1;
            foreach (var p in byKey)
            {
                if (previous >= 0 && TimeSpan.FromMilliseconds(p.TimestampMs - previous) > best.Item1)
                {
                    best = (TimeSpan.FromMilliseconds(p.TimestampMs - previous), byKey.Key, DateTimeOffset.FromUnixTimeMilliseconds(p.TimestampMs).UtcDateTime);
                }
                previous = p.TimestampMs;
            }
        }
        return best;
    }

    private static void AssertAllCheckpointed(WorkerGroup group, int events)
    {
        var checkpoints = CheckpointFiles.All(group.Checkpoints, group.EventsTopic, Partitions);
        Assert.True(events == checkpoints.Sum(c => c.Snapshot.Counters.Events), $"checkpoints hold {checkpoints.Sum(c => c.Snapshot.Counters.Events)} of {events} events: {string.Join(" ", checkpoints.Select(c => $"p{c.Partition}:{c.Snapshot.Counters.Events}@{c.EventsOffset}"))}\n{group.Timeline()}");
        Assert.Equal(events, checkpoints.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(0, checkpoints.Sum(c => c.Snapshot.Counters.UnknownLabels + c.Snapshot.Counters.DuplicateLabels));
    }
}
