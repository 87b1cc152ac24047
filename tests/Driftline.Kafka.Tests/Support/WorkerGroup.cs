using System.Text.Json;

namespace Driftline.Kafka.Tests.Support;

/// <summary>
/// Real <c>driftline run</c> processes in one consumer group on the mock cluster, with topics
/// of <see cref="Partitions"/> partitions made beforehand, one shared checkpoint folder (a
/// shared volume) and one configuration file, as an operator would run a group.
/// </summary>
internal sealed class WorkerGroup : IDisposable
{
    private readonly TempDir _dir = new();
    private readonly string _bootstrap;

    public WorkerGroup(MockCluster cluster, string prefix, int partitions, IReadOnlyDictionary<string, string>? client = null, int checkpointEveryLabels = 5_000, int initialRebalanceDelayMs = 200)
        : this(cluster.Bootstrap, cluster.CreateTopic, prefix, partitions, client, checkpointEveryLabels)
    {
        // A broker waits 3 s for more members at a group's first join; the tests start members one by one.
        if (initialRebalanceDelayMs >= 0)
        {
            cluster.InitialRebalanceDelay(initialRebalanceDelayMs);
        }
    }

    /// <summary>A group on any cluster at <paramref name="bootstrap"/> (a real broker too), its topics made by <paramref name="createTopic"/>.</summary>
    public WorkerGroup(string bootstrap, Action<string, int> createTopic, string prefix, int partitions, IReadOnlyDictionary<string, string>? client = null, int checkpointEveryLabels = 5_000)
    {
        _bootstrap = bootstrap;
        Prefix = prefix;
        Partitions = partitions;
        Checkpoints = Path.Combine(_dir.Path, "checkpoints");
        ConfigPath = Path.Combine(_dir.Path, "driftline.json");
        createTopic(EventsTopic, partitions);
        createTopic(LabelsTopic, partitions);
        // Outputs exist beforehand too, as in production, so readers subscribed early see them at once.
        createTopic(PredictionsTopic, 4);
        createTopic(DeadLetterTopic, 4);
        var settings = new Dictionary<string, string>
        {
            // The mock answers an idle fetch only at fetch.wait.max.ms; keep it well under the label hold.
            ["fetch.wait.max.ms"] = "50",
        };
        foreach (var (name, value) in client ?? new Dictionary<string, string>())
        {
            settings[name] = value;
        }
        File.WriteAllText(ConfigPath, JsonSerializer.Serialize(new
        {
            Kafka = new
            {
                Group = prefix + "-group",
                EventsTopic,
                LabelsTopic,
                PredictionsTopic,
                AlertsTopic = prefix + "-alerts",
                DeadLetterTopic,
                CheckpointDir = Checkpoints,
                CheckpointEveryLabels = checkpointEveryLabels,
                CheckpointEvery = "00:00:01",
                LabelHold = "00:00:02",
                Client = settings,
            },
            Worker = new { MetricsPort = 0 },
        }));
    }

    public string Prefix { get; }

    public int Partitions { get; }

    public string Checkpoints { get; }

    public string ConfigPath { get; }

    public string EventsTopic => Prefix + "-events";

    public string LabelsTopic => Prefix + "-labels";

    public string PredictionsTopic => Prefix + "-predictions";

    public string DeadLetterTopic => Prefix + "-dead";

    public List<WorkerProcess> Members { get; } = [];

    /// <summary>Waits until the checkpoints hold <paramref name="labels"/> joined labels (every label graded and made durable); false when the time is up.</summary>
    public bool WaitForCheckpointedLabels(int labels, TimeSpan limit)
    {
        var deadline = DateTime.UtcNow + limit;
        while (DateTime.UtcNow < deadline)
        {
            try
            {
                if (CheckpointFiles.All(Checkpoints, EventsTopic, Partitions).Sum(c => c.Snapshot.Counters.Labels) >= labels)
                {
                    return true;
                }
            }
            catch (IOException)
            {
                // Not written yet.
            }
            Thread.Sleep(50);
        }
        return false;
    }

    /// <summary>Each member's ownership changes and warnings, for a failure message.</summary>
    public string Timeline() => string.Join("\n----\n", Members.Select(m => string.Join("\n", m.Errors.Split('\n').Where(l => l.Contains("assigned", StringComparison.Ordinal) || l.Contains("revoked", StringComparison.Ordinal) || l.Contains("lost", StringComparison.Ordinal) || l.Contains("WRN", StringComparison.Ordinal) && !l.Contains("Alert", StringComparison.Ordinal) || l.Contains("ERR", StringComparison.Ordinal) || l.Contains("left group", StringComparison.Ordinal)).Select(l => l.Length > 240 ? l[..240] : l))));

    /// <summary>
    /// The members' ownership changes between <paramref name="from"/> and <paramref name="to"/>
    /// in time order, each with the time the test read it and the member's number, to see where
    /// a rebalance spends its time.
    /// </summary>
    public string TimedTimeline(DateTime from, DateTime to) => string.Join("\n", Members
        .SelectMany((m, i) => m.TimedLines.Where(l => l.At >= from && l.At <= to && (l.Line.Contains("assigned", StringComparison.Ordinal) || l.Line.Contains("revoked", StringComparison.Ordinal) || l.Line.Contains("lost", StringComparison.Ordinal) || l.Line.Contains("joining group", StringComparison.Ordinal) || l.Line.Contains("left group", StringComparison.Ordinal))).Select(l => (l.At, Text: $"{l.At:HH:mm:ss.fff} m{i}: {(l.Line.Length > 160 ? l.Line[..160] : l.Line)}")))
        .OrderBy(l => l.At)
        .Select(l => l.Text));

    /// <summary>
    /// Every partition move after <paramref name="from"/>, from the members' logs: how long the
    /// partition had no owner (from its revocation, its owner's clean exit or kill, to its
    /// assignment elsewhere), and whether a member was assigned a partition another member still
    /// held (the old owner not yet told). The time the group itself takes to hand a partition on,
    /// apart from the scoring before and after.
    /// </summary>
    public List<(int Partition, DateTime At, TimeSpan Unowned, bool Overlap)> Handovers(DateTime from)
    {
        var changes = new List<(DateTime At, int Member, bool Assigned, int[] Partitions)>();
        for (int i = 0; i < Members.Count; i++)
        {
            foreach (var (at, line) in Members[i].TimedLines)
            {
                var assigned = System.Text.RegularExpressions.Regex.Match(line, @"\bPartition (\d+) assigned");
                var gone = System.Text.RegularExpressions.Regex.Match(line, @"\bPartitions \[([\d, ]*)\] (revoked|lost)");
                if (assigned.Success)
                {
                    changes.Add((at, i, true, [int.Parse(assigned.Groups[1].Value, System.Globalization.CultureInfo.InvariantCulture)]));
                }
                else if (gone.Success)
                {
                    changes.Add((at, i, false, [.. gone.Groups[1].Value.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Select(p => int.Parse(p, System.Globalization.CultureInfo.InvariantCulture))]));
                }
                else if (line.Contains("Worker left group", StringComparison.Ordinal))
                {
                    changes.Add((at, i, false, [.. Enumerable.Range(0, Partitions)]));
                }
            }
            if (Members[i].KilledAt is { } killed)
            {
                changes.Add((killed, i, false, [.. Enumerable.Range(0, Partitions)]));
            }
        }
        var owner = new Dictionary<int, int>();
        var released = new Dictionary<int, DateTime>();
        var moves = new List<(int, DateTime, TimeSpan, bool)>();
        foreach (var (at, member, isAssigned, partitions) in changes.OrderBy(c => c.At))
        {
            foreach (int p in partitions)
            {
                if (isAssigned)
                {
                    bool overlap = owner.TryGetValue(p, out int other) && other != member;
                    if (at >= from && (overlap || released.ContainsKey(p)))
                    {
                        moves.Add((p, at, overlap ? TimeSpan.Zero : at - released[p], overlap));
                    }
                    owner[p] = member;
                }
                else if (owner.TryGetValue(p, out int held) && held == member)
                {
                    owner.Remove(p);
                    released[p] = at;
                }
            }
        }
        return moves;
    }

    /// <summary>Starts one more member; <paramref name="environment"/> overrides settings as an operator would.</summary>
    public WorkerProcess Start(IReadOnlyDictionary<string, string>? environment = null)
    {
        var member = new WorkerProcess(ConfigPath, _bootstrap, environment);
        Members.Add(member);
        return member;
    }

    /// <summary>The running members' partition counts once every partition is owned by exactly one of them, or null.</summary>
    public int[]? Split()
    {
        var running = Members.Where(m => !m.HasExited).ToList();
        var owned = running.SelectMany(m => m.Owned).ToList();
        return owned.Count == Partitions && owned.Distinct().Count() == Partitions ? [.. running.Select(m => m.Owned.Count)] : null;
    }

    /// <summary>Waits until every partition is owned once and the split has held for <paramref name="settle"/>; returns the counts.</summary>
    public int[] WaitForSplit(Func<int[], bool> good, TimeSpan limit, TimeSpan settle)
    {
        var deadline = DateTime.UtcNow + limit;
        string last = "";
        var since = DateTime.UtcNow;
        while (true)
        {
            foreach (var m in Members.Where(m => m.HasExited && !m.Killed && !m.Terminated))
            {
                throw new Xunit.Sdk.XunitException("a member exited early:\n" + m.Errors);
            }
            string now = string.Join("|", Members.Where(m => !m.HasExited).Select(m => string.Join(",", m.Owned)));
            if (now != last)
            {
                last = now;
                since = DateTime.UtcNow;
            }
            else if (Split() is { } split && good(split) && DateTime.UtcNow - since >= settle)
            {
                return split;
            }
            if (DateTime.UtcNow > deadline)
            {
                throw new TimeoutException($"no settled split of {Partitions} partitions in {limit.TotalSeconds:0} s: {now}\n" + string.Join("\n----\n", Members.Select(m => m.Errors)));
            }
            Thread.Sleep(20);
        }
    }

    public void Dispose()
    {
        foreach (var member in Members)
        {
            member.Dispose();
        }
        _dir.Dispose();
    }
}
