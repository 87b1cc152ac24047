using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>
/// Real <c>driftline run</c> processes in one consumer group on the mock cluster (issue 15):
/// 16 events partitions, 16 co-partitioned labels partitions, half the labels late.
/// </summary>
[Collection(RealProcesses.Name)]
public sealed class WorkerGroupProcessTests
{
    private const int Partitions = 16;
    private const int Keys = 64;

    [Theory]
    [InlineData(1, "classic")]
    [InlineData(2, "classic")]
    [InlineData(3, "classic")]
    [InlineData(4, "classic")]
    [InlineData(3, "consumer")]
    public void Run_WorkersInOneGroup_SplitEvenlyPredictEveryIdAndStopOnSigterm(int workers, string protocol)
    {
        using var cluster = new MockCluster();
        // The consumer protocol (KIP-848) takes no client session or heartbeat setting: the broker sets both.
        var client = protocol == "classic" ? Detect : new Dictionary<string, string> { ["group.protocol"] = protocol };
        using var group = new WorkerGroup(cluster, $"gp{workers}{protocol[..2]}", Partitions, client);
        var records = TestStream.Generate(20_000, Keys, seed: 40 + workers);
        int events = records.Count(r => !r.IsLabel);
        for (int i = 0; i < workers; i++)
        {
            group.Start();
        }
        // Spread: every partition owned once, the counts at most one apart, each member owning some within 5 s of asking to join
        // (its "Worker joining group" line, after its own start-up).
        var split = group.WaitForSplit(s => s.Max() - s.Min() <= 1, TimeSpan.FromSeconds(30), TimeSpan.FromSeconds(1));
        TestContext.Current.TestOutputHelper?.WriteLine($"{workers} workers ({protocol}): split {string.Join("/", split)}; first partitions after {string.Join(", ", group.Members.Select(m => $"{(m.FirstOwned!.Value - m.JoinedAt!.Value).TotalSeconds:0.0} s"))}");
        // On the consumer protocol the mock, as the broker, paces the group by its own heartbeat
        // interval: a late member gets partitions only after the earlier members have heard, on a
        // heartbeat, that they must give some up, and have acknowledged it on the next one. That
        // took 6.6-7.1 s for the third member in runs here (0.6-0.8 s for the first two), so the
        // limit there is 10 s: the 5 s target is the classic protocol's (Kafka README).
        var limit = TimeSpan.FromSeconds(protocol == "classic" ? 5 : 10);
        foreach (var m in group.Members)
        {
            Assert.True(m.FirstOwned!.Value - m.JoinedAt!.Value <= limit, $"a member owned its first partition {(m.FirstOwned.Value - m.JoinedAt.Value).TotalSeconds:0.0} s after asking to join the group (limit {limit.TotalSeconds:0} s on the {protocol} protocol; load average {File.ReadAllText("/proc/loadavg").Split(' ')[0]} on {Environment.ProcessorCount} cores)\n{group.Timeline()}");
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
            TestContext.Current.TestOutputHelper?.WriteLine($"stopped in {clock.Elapsed.TotalSeconds:0.0} s");
        }
        AssertAllCheckpointed(group, events);
    }

    [Fact]
    public void Run_MembersJoinAndLeaveUnderLoad_EveryIdPredictedAndThePauseIsShort()
    {
        using var cluster = new MockCluster();
        using var group = new WorkerGroup(cluster, "gm", Partitions, Detect);
        // 14 s of feed: each change below waits for the one before, so on a loaded machine the kill
        // due at 8 s comes seconds late, and it needs feed after it for its pause to show.
        var records = TestStream.Generate(28_000, Keys, seed: 61);
        int events = records.Count(r => !r.IsLabel);
        var a = group.Start();
        group.WaitForSplit(s => true, TimeSpan.FromSeconds(30), TimeSpan.Zero);

        // A live feed of 14 s; a member joins at 2 s and at 4 s, one leaves cleanly at 6 s and one is killed at 8 s.
        var feed = new Thread(() => Topics.ProducePaced(cluster.Bootstrap, group.EventsTopic, group.LabelsTopic, records, eventsPerSecond: 2_000));
        var feedStart = DateTime.UtcNow;
        feed.Start();
        var clock = System.Diagnostics.Stopwatch.StartNew();
        // Each change waits for the one before to take effect, so on a loaded machine, where a
        // process can take seconds to start, the changes still follow one another.
        WaitUntil(clock, 2.0);
        var b = group.Start();
        WaitUntilOwns(b);
        WaitUntil(clock, 4.0);
        var c = group.Start();
        WaitUntilOwns(c);
        WaitUntil(clock, 6.0);
        Assert.Equal(0, b.Terminate(TimeSpan.FromSeconds(10)));
        WaitUntil(clock, 8.0);
        var killedAt = DateTime.UtcNow;
        c.Kill();
        feed.Join();
        var feedAfterKill = DateTime.UtcNow - killedAt;

        var predictions = Topics.ReadTimed(cluster.Bootstrap, group.PredictionsTopic, events, TimeSpan.FromSeconds(60));
        int predicted = predictions.Select(p => p.Id).Distinct().Count();
        Assert.True(predicted == events, $"{events - predicted} of {events} ids never predicted\n" + group.Timeline());
        long kill = new DateTimeOffset(killedAt).ToUnixTimeMilliseconds();
        var (gap, key, at) = LongestGap([.. predictions.Where(p => p.TimestampMs < kill)]);
        var (killGap, killKey, _) = LongestGap([.. predictions.Where(p => p.TimestampMs >= kill - 200)]);
        // Which keys moved: each key lives on the events partition its records went to.
        var partitionOf = Topics.ReadPlaced(cluster.Bootstrap, group.EventsTopic, events, TimeSpan.FromSeconds(30))
            .GroupBy(r => System.Text.Json.JsonDocument.Parse(r.Value).RootElement.GetProperty("key").GetString()!)
            .ToDictionary(g => g.Key, g => g.First().Partition, StringComparer.Ordinal);
        var moves = group.Handovers(feedStart);
        var moved = moves.Where(m => m.At < killedAt).Select(m => m.Partition).ToHashSet();
        var beforeKill = predictions.Where(p => p.TimestampMs < kill).ToList();
        var (movedGap, _, _) = LongestGap([.. beforeKill.Where(p => moved.Contains(partitionOf[KeyOf(p.Value)]))]);
        // The same run's baseline: keys whose partition never moved, scoring through the same rebalances on the same loaded machine.
        var (keptGap, _, _) = LongestGap([.. beforeKill.Where(p => !moved.Contains(partitionOf[KeyOf(p.Value)]))]);
        var unowned = moves.Where(m => m.At < killedAt && !m.Overlap).Select(m => m.Unowned.TotalSeconds).Order().ToList();
        string load = File.ReadAllText("/proc/loadavg").Split(' ')[0];
        TestContext.Current.TestOutputHelper?.WriteLine(group.TimedTimeline(feedStart, DateTime.MaxValue));
        TestContext.Current.TestOutputHelper?.WriteLine($"[measured] joins and a clean leave under load: longest gap in one key's predictions {gap.TotalSeconds:0.00} s (key {key}, until {at:HH:mm:ss.fff}); moved partitions' keys {movedGap.TotalSeconds:0.00} s, never-moved partitions' keys {keptGap.TotalSeconds:0.00} s; {unowned.Count} moves, a partition without owner {(unowned.Count > 0 ? unowned[unowned.Count / 2] : 0):0.00} s median, {(unowned.Count > 0 ? unowned[^1] : 0):0.00} s longest; {moves.Count(m => m.Overlap)} assigned while another member held them; after a SIGKILL: {(killKey.Length == 0 ? "none measured (the feed had ended)" : $"{killGap.TotalSeconds:0.00} s (key {killKey}; session timeout 1.5 s; the feed ran on {feedAfterKill.TotalSeconds:0.0} s after the kill)")}; load average {load}");
        Assert.True(group.WaitForCheckpointedLabels(events, TimeSpan.FromSeconds(30)), "not every label was joined and checkpointed\n" + group.Timeline());
        foreach (var m in group.Members.Where(m => !m.Killed && !m.HasExited))
        {
            Assert.Equal(0, m.Terminate(TimeSpan.FromSeconds(10)));
        }
        AssertAllCheckpointed(group, events);
        // The figure is reported, not held to 3 s here (speed targets live in benchmarks): this bound catches a stall.
        Assert.True(gap <= TimeSpan.FromSeconds(10), $"key {key} had no prediction for {gap.TotalSeconds:0.00} s until {at:HH:mm:ss.fff}\n{group.Timeline()}");
        Assert.True(killGap <= TimeSpan.FromSeconds(10), $"after the kill key {killKey} had no prediction for {killGap.TotalSeconds:0.00} s\n{group.Timeline()}");
    }

    [Fact]
    public void Run_MembersKilledOneAfterAnother_SurvivorResumesFromCheckpointsLikeAnUninterruptedRun()
    {
        using var cluster = new MockCluster();
        // Checkpoints every 20 labels slow the group enough to kill members mid-stream.
        using var group = new WorkerGroup(cluster, "gt", Partitions, Detect, checkpointEveryLabels: 20);
        var records = TestStream.Generate(30_000, Keys, seed: 71);
        int events = records.Count(r => !r.IsLabel);
        int late = records.Count(r => r.IsLabel);
        Topics.ProduceStream(cluster.Bootstrap, group.EventsTopic, group.LabelsTopic, records);

        var a = group.Start();
        var b = group.Start();
        var survivor = group.Start();
        int atFirstKill, atSecondKill;
        using (var watcher = new PredictionWatcher(cluster.Bootstrap, group.PredictionsTopic))
        {
            // All three own partitions before anyone is killed, so each kill moves partitions.
            var split = group.WaitForSplit(s => s.All(c => c > 0), TimeSpan.FromSeconds(30), TimeSpan.Zero);
            TestContext.Current.TestOutputHelper?.WriteLine($"split {string.Join("/", split)} with {watcher.Distinct} ids predicted");
            WaitForIds(watcher, events * 2 / 10, group);
            a.Kill();
            atFirstKill = watcher.Distinct;
            // The two left take the killed member's partitions over and get further before the next kill.
            group.WaitForSplit(s => s.Length == 2 && s.All(c => c > 0), TimeSpan.FromSeconds(30), TimeSpan.Zero);
            WaitForIds(watcher, Math.Min(Math.Max(events * 6 / 10, watcher.Distinct + 200), events - 100), group);
            b.Kill();
            atSecondKill = watcher.Distinct;
        }
        TestContext.Current.TestOutputHelper?.WriteLine($"killed at {atFirstKill} and {atSecondKill} of {events} ids predicted");
        // The first kill must fall mid-stream. The second should too, but on a loaded machine the
        // test's own watcher lags the group (once it saw 22,500 of 30,000 ids at the first kill),
        // and a second kill after the end still checks the takeover from that member's
        // checkpoints: its partitions are restored by the survivor and no label applies twice.
        Assert.True(atFirstKill < events, "the first member was killed after the stream ended");
        Assert.True(group.WaitForCheckpointedLabels(events, TimeSpan.FromSeconds(90)), "the survivor did not finish the stream\n" + group.Timeline());
        Assert.Equal(Partitions, survivor.Owned.Count);
        Assert.Equal(0, survivor.Terminate(TimeSpan.FromSeconds(10)));
        // The survivor restored the partitions it took over from the checkpoints the others left.
        Assert.Contains("restored", survivor.Errors, StringComparison.Ordinal);

        // Every label joined exactly once: none lost as unknown after a move, none applied twice.
        var checkpoints = CheckpointFiles.All(group.Checkpoints, group.EventsTopic, Partitions);
        Assert.Equal(events, checkpoints.Sum(c => c.Snapshot.Counters.Events));
        Assert.Equal(events, checkpoints.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(late, checkpoints.Sum(c => c.Snapshot.Counters.LateLabels));
        Assert.Equal(0, checkpoints.Sum(c => c.Snapshot.Counters.UnknownLabels + c.Snapshot.Counters.DuplicateLabels));

        var predictions = Topics.ReadTimed(cluster.Bootstrap, group.PredictionsTopic, events, TimeSpan.FromSeconds(60));
        var expected = Uninterrupted(cluster, group, events);
        var actual = LastPerId(predictions);
        Assert.Equal(events, actual.Count);
        int differ = expected.Count(kv => actual.GetValueOrDefault(kv.Key) != kv.Value);
        Assert.True(differ == 0, $"{differ} ids' last prediction differs from an uninterrupted run's, e.g. {expected.Where(kv => actual.GetValueOrDefault(kv.Key) != kv.Value).Select(kv => kv.Value + " vs " + actual.GetValueOrDefault(kv.Key)).FirstOrDefault()}");
    }

    [Fact]
    public void Run_OwnersKilledAndStoppedWithPredictionsWaiting_TheirLateLabelsJoinOnTheNewOwner()
    {
        using var cluster = new MockCluster();
        using var group = new WorkerGroup(cluster, "gf", Partitions, Detect);
        var records = TestStream.Generate(6_000, Keys, seed: 81);
        var events = records.Where(r => !r.IsLabel).ToList();
        var late = records.Where(r => r.IsLabel).OrderBy(r => r.TimestampMs).ToList();
        var killed = group.Start();
        var stopped = group.Start();
        var survivor = group.Start();
        group.WaitForSplit(s => s.All(c => c > 0), TimeSpan.FromSeconds(30), TimeSpan.Zero);

        // Every event predicted and checkpointed by its first owner, its late label not yet sent.
        Topics.Produce(cluster.Bootstrap, group.EventsTopic, events.Select(r => ((string?)r.Key, r.Value, r.TimestampMs)));
        var predictions = Topics.ReadTimed(cluster.Bootstrap, group.PredictionsTopic, events.Count, TimeSpan.FromSeconds(60));
        Assert.Equal(events.Count, predictions.Select(p => p.Id).Distinct().Count());
        var before = WaitForCheckpointedEvents(group, events.Count);
        var waiting = before.ToDictionary(c => c.Partition, c => c.Snapshot.Pending.Where(p => !p.Labelled).Select(p => p.Id).ToHashSet(StringComparer.Ordinal));
        Assert.Equal(late.Select(r => r.Id).Order(StringComparer.Ordinal), waiting.Values.SelectMany(w => w).Order(StringComparer.Ordinal));
        var moved = killed.Owned.Concat(stopped.Owned).ToList();

        // One owner dies without a word, the other leaves cleanly: the survivor owns everything.
        killed.Kill();
        group.WaitForSplit(s => s.Length == 2 && s.All(c => c > 0), TimeSpan.FromSeconds(30), TimeSpan.Zero);
        Assert.Equal(0, stopped.Terminate(TimeSpan.FromSeconds(10)));
        group.WaitForSplit(s => s.Length == 1, TimeSpan.FromSeconds(30), TimeSpan.Zero);

        Topics.Produce(cluster.Bootstrap, group.LabelsTopic, late.Select(r => ((string?)r.Key, r.Value, r.TimestampMs)));
        Assert.True(group.WaitForCheckpointedLabels(events.Count, TimeSpan.FromSeconds(60)), "not every label was joined and checkpointed\n" + group.Timeline());
        Assert.Equal(0, survivor.Terminate(TimeSpan.FromSeconds(10)));

        // Each moved partition joined exactly the late labels of the predictions its old owner left waiting.
        var after = CheckpointFiles.All(group.Checkpoints, group.EventsTopic, Partitions).ToDictionary(c => c.Partition);
        foreach (int p in moved)
        {
            Assert.True(waiting[p].Count > 0, $"partition {p} had no prediction waiting for a label");
            Assert.Equal(waiting[p].Count, after[p].Snapshot.Counters.LateLabels);
            // The graded stay in the store a while (a second label for them is a duplicate); none still waits.
            Assert.DoesNotContain(after[p].Snapshot.Pending, x => !x.Labelled);
        }
        Assert.Equal(0, after.Values.Sum(c => c.Snapshot.Counters.UnknownLabels + c.Snapshot.Counters.DuplicateLabels));
        Assert.Equal(late.Count, after.Values.Sum(c => c.Snapshot.Counters.LateLabels));
        Assert.Equal(events.Count, after.Values.Sum(c => c.Snapshot.Counters.Events));
        Assert.Contains("restored", survivor.Errors, StringComparison.Ordinal);
    }

    private static List<Driftline.Kafka.Checkpoints.PartitionCheckpoint> WaitForCheckpointedEvents(WorkerGroup group, int events)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(30);
        while (true)
        {
            try
            {
                var checkpoints = CheckpointFiles.All(group.Checkpoints, group.EventsTopic, Partitions);
                if (checkpoints.Count == Partitions && checkpoints.Sum(c => c.Snapshot.Counters.Events) == events)
                {
                    return checkpoints;
                }
            }
            catch (IOException)
            {
                // Being replaced.
            }
            Assert.True(DateTime.UtcNow < deadline, "the owners did not checkpoint every event\n" + group.Timeline());
            Thread.Sleep(50);
        }
    }

    /// <summary>The same stream through one driftline process of its own group, without a stop: its last prediction per id.</summary>
    internal static Dictionary<string, string> Uninterrupted(MockCluster cluster, WorkerGroup group, int events)
    {
        using var dir = new TempDir();
        cluster.CreateTopic(group.PredictionsTopic + "-straight", 4);
        var environment = new Dictionary<string, string>
        {
            ["DRIFTLINE_Kafka__Group"] = group.Prefix + "-straight",
            ["DRIFTLINE_Kafka__PredictionsTopic"] = group.PredictionsTopic + "-straight",
            ["DRIFTLINE_Kafka__CheckpointDir"] = dir.Path,
            ["DRIFTLINE_Kafka__CheckpointEveryLabels"] = "20000",
        };
        using var straight = new WorkerProcess(group.ConfigPath, cluster.Bootstrap, environment);
        var predictions = Topics.ReadTimed(cluster.Bootstrap, group.PredictionsTopic + "-straight", events, TimeSpan.FromSeconds(60));
        Assert.Equal(0, straight.Terminate(TimeSpan.FromSeconds(10)));
        return LastPerId(predictions);
    }

    /// <summary>The last prediction of every id: the highest offset of its key's predictions partition.</summary>
    internal static Dictionary<string, string> LastPerId(List<(int Partition, long Offset, long TimestampMs, string Id, string Value)> predictions) =>
        predictions.GroupBy(p => p.Id).ToDictionary(g => g.Key, g => g.MaxBy(p => (p.Partition, p.Offset)).Value, StringComparer.Ordinal);

    private static void WaitForIds(PredictionWatcher watcher, int ids, WorkerGroup group)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        while (watcher.Distinct < ids)
        {
            Assert.True(DateTime.UtcNow < deadline, "predictions did not advance\n" + group.Timeline());
            Thread.Sleep(1);
        }
    }

    /// <summary>
    /// A member that died is noticed after 1.5 s, not the client's default 45 s (an operator's
    /// setting). On the mock it also sets the length of every classic rebalance round: the
    /// mock's group waits session.timeout.ms - 1 s for members to rejoin after a join (44 s
    /// with the default), where a broker ends the round once every member has rejoined.
    /// </summary>
    internal static readonly Dictionary<string, string> Detect = new() { ["session.timeout.ms"] = "1500", ["heartbeat.interval.ms"] = "150" };

    private static void WaitUntilOwns(WorkerProcess member)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(20);
        while (member.Owned.Count == 0 && DateTime.UtcNow < deadline && !member.HasExited)
        {
            Thread.Sleep(20);
        }
    }

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

    private static string KeyOf(string prediction) => System.Text.Json.JsonDocument.Parse(prediction).RootElement.GetProperty("key").GetString()!;

    private static void AssertAllCheckpointed(WorkerGroup group, int events)
    {
        var checkpoints = CheckpointFiles.All(group.Checkpoints, group.EventsTopic, Partitions);
        Assert.True(events == checkpoints.Sum(c => c.Snapshot.Counters.Events), $"checkpoints hold {checkpoints.Sum(c => c.Snapshot.Counters.Events)} of {events} events: {string.Join(" ", checkpoints.Select(c => $"p{c.Partition}:{c.Snapshot.Counters.Events}@{c.EventsOffset}"))}\n{group.Timeline()}");
        Assert.Equal(events, checkpoints.Sum(c => c.Snapshot.Counters.Labels));
        Assert.Equal(0, checkpoints.Sum(c => c.Snapshot.Counters.UnknownLabels + c.Snapshot.Counters.DuplicateLabels));
    }
}
