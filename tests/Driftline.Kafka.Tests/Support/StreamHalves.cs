using Driftline.Core.Options;

namespace Driftline.Kafka.Tests.Support;

/// <summary>
/// A test stream in time order, cut in two at a timestamp: a worker stopped between the
/// halves restarts mid-stream at the same point whatever the machine's speed.
/// </summary>
internal sealed class StreamHalves
{
    public StreamHalves(int events, int keys, int seed, DriftlineOptions? core = null, IReadOnlyList<Driftline.Kafka.Worker.ChallengerConfig>? challengers = null)
    {
        Core = core;
        Challengers = challengers;
        All = TestStream.Generate(events, keys, seed).OrderBy(r => r.TimestampMs).ToList();
        if (core?.Model.Classes is { } classes)
        {
            // Three outcomes from the binary stream: 1 names the second class; 0 the first or,
            // for every third id, the third.
            All = All.Select(r => r with
            {
                Value = System.Text.RegularExpressions.Regex.Replace(r.Value, "\"label\":([01])", m =>
                    $"\"label\":\"{classes[m.Groups[1].Value == "1" ? 1 : int.Parse(r.Id.AsSpan(2), System.Globalization.CultureInfo.InvariantCulture) % 3 == 0 ? 2 : 0]}\""),
            }).ToList();
        }
        long cut = All[All.Count / 2].TimestampMs;
        First = All.Where(r => r.TimestampMs < cut).ToList();
        Second = All.Where(r => r.TimestampMs >= cut).ToList();
    }

    public List<TestRecord> All { get; }

    /// <summary>The engine configuration the workers run with (null: the defaults).</summary>
    public DriftlineOptions? Core { get; }

    /// <summary>The challengers the workers run with (null: none).</summary>
    public IReadOnlyList<Driftline.Kafka.Worker.ChallengerConfig>? Challengers { get; }

    public List<TestRecord> First { get; }

    public List<TestRecord> Second { get; }

    public int Events => All.Count(r => !r.IsLabel);

    public int FirstEvents => First.Count(r => !r.IsLabel);

    /// <summary>Labels of the first half, late and inline: all the first worker can join.</summary>
    public int FirstJoined => First.Count(r => r.IsLabel) + First.Count(r => !r.IsLabel && r.Value.Contains("\"label\"", StringComparison.Ordinal));

    /// <summary>
    /// Runs a worker of its own group over the whole stream without a stop and returns its
    /// checkpoints: the models a restarted run must equal.
    /// </summary>
    public List<Driftline.Kafka.Checkpoints.PartitionCheckpoint> Uninterrupted(MockCluster cluster, string prefix, string directory)
    {
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, prefix, directory, group: "straight");
        options.PredictionsTopic = prefix + "-predictions-straight";
        using (var host = new WorkerHost(options, Core, challengers: Challengers))
        {
            host.WaitFor(s => s.Predictions >= Events && s.LabelsJoined >= Events, TimeSpan.FromSeconds(60));
            host.Stop();
        }
        return CheckpointFiles.All(directory, options.EventsTopic);
    }
}
