using Confluent.Kafka;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Options;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The commit rule, in one place: flush the producer (every prediction before the offsets
/// acknowledged), snapshot the engines, write the checkpoints (to the folder and, when
/// <paramref name="topic"/> is given, to the checkpoint topic, acknowledged by the broker),
/// and only then commit the events offsets. Used by the worker loop only; at most one write
/// is in flight.
/// </summary>
internal sealed class CheckpointCommitter(KafkaOptions options, CheckpointStore store, TopicCheckpointWriter? topic, WorkerStats stats, IProducer<byte[]?, byte[]> producer, Action throwIfFatal)
{
    private static readonly TimeSpan FlushLimit = TimeSpan.FromSeconds(60);

    private Task? _writing;
    private List<TopicPartitionOffset>? _toCommit;
    private DateTime _writtenAt;

    /// <summary>When the last checkpoint's snapshots were taken (UTC).</summary>
    public DateTime LastCheckpoint { get; private set; } = DateTime.UtcNow;

    /// <summary>True when a background write has finished and its offsets wait to be committed.</summary>
    public bool WriteCompleted => _writing is { IsCompleted: true };

    /// <summary>
    /// Flush, then checkpoint, then commit: the order the commit rule needs. The snapshots are
    /// taken here, on the loop thread; writing them (JSON, fsync, rename) runs on a pool thread
    /// unless <paramref name="wait"/>, and the commit follows once the files are on disk (and on the checkpoint topic)
    /// (<see cref="FinishWrite"/>), so the loop keeps scoring meanwhile.
    /// </summary>
    public void CheckpointAndCommit(IConsumer<byte[]?, byte[]> events, List<PartitionState> states, bool wait)
    {
        // One write in flight at a time, so two versions of a file never race.
        FinishWrite(events);
        var clock = System.Diagnostics.Stopwatch.StartNew();
        while (producer.Flush(TimeSpan.FromMilliseconds(500)) > 0)
        {
            throwIfFatal();
            if (clock.Elapsed > FlushLimit)
            {
                throw new KafkaWorkerException($"the broker has not acknowledged the predictions within {FlushLimit.TotalSeconds:0} s; stopping without committing (a restart resumes from the last checkpoint)");
            }
        }
        throwIfFatal();
        stats.LastFlushMs = clock.Elapsed.TotalMilliseconds;
        var now = DateTime.UtcNow;
        var checkpoints = new List<PartitionCheckpoint>();
        var commits = new List<TopicPartitionOffset>();
        foreach (var state in states.Where(s => s.Dirty))
        {
            checkpoints.Add(state.ToCheckpoint(options.EventsTopic, options.LabelsTopic, now));
            state.CheckpointedEvents = state.EventsNext;
            state.CheckpointedLabels = state.LabelsNext;
            state.LabelsSinceCheckpoint = 0;
            if (state.EventsNext >= 0)
            {
                commits.Add(new TopicPartitionOffset(options.EventsTopic, state.Partition, state.EventsNext));
            }
        }
        LastCheckpoint = now;
        stats.LastCheckpointMs = clock.Elapsed.TotalMilliseconds;
        if (checkpoints.Count == 0)
        {
            return;
        }
        _writing = wait ? null : Task.Run(() => WriteAll(checkpoints));
        _toCommit = commits;
        _writtenAt = now;
        if (wait)
        {
            WriteAll(checkpoints);
            FinishWrite(events);
        }
    }

    private void WriteAll(List<PartitionCheckpoint> checkpoints)
    {
        foreach (var checkpoint in checkpoints)
        {
            // Serialised once: the file and the topic carry the same bytes.
            byte[] json = CheckpointStore.Serialize(checkpoint);
            store.Write(checkpoint, json);
            topic?.Write(checkpoint, json);
        }
    }

    /// <summary>Waits for the checkpoint write in flight, if any, then commits the offsets it makes safe.</summary>
    public void FinishWrite(IConsumer<byte[]?, byte[]> events)
    {
        if (_writing is { } writing)
        {
            _writing = null;
            try
            {
                writing.GetAwaiter().GetResult();
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                _toCommit = null;
                throw new KafkaWorkerException($"cannot write a checkpoint in '{store.Directory}': {ex.Message}", ex);
            }
            catch (KafkaWorkerException)
            {
                // The checkpoint topic did not acknowledge: nothing of this write may be committed.
                _toCommit = null;
                throw;
            }
        }
        if (_toCommit is not { } commits)
        {
            return;
        }
        _toCommit = null;
        stats.Checkpoints += commits.Count;
        stats.LastCheckpointAt = _writtenAt;
        if (commits.Count == 0)
        {
            return;
        }
        try
        {
            events.Commit(commits);
        }
        catch (KafkaException ex)
        {
            // The checkpoint, not the committed offset, is where a restart resumes; the commit
            // shows lag to operators and is retried with the next checkpoint.
            Log.Warning("Offset commit failed ({Reason}); the checkpoints hold the positions", ex.Error.Reason);
        }
    }
}
