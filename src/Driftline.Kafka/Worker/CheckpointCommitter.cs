using System.Diagnostics;
using Confluent.Kafka;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Options;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The commit rule, in one place: cut (the positions, and the delivery epoch of every output
/// before them), snapshot the engines at the cut, wait until the broker has acknowledged that
/// epoch, write the checkpoints (to the folder and, when <paramref name="topic"/> is given, to
/// the checkpoint topic, acknowledged by the broker), and only then commit the events offsets.
/// Used by the worker loop only; at most one write is in flight.
/// </summary>
internal sealed class CheckpointCommitter(KafkaOptions options, CheckpointStore store, TopicCheckpointWriter? topic, WorkerStats stats, DeliveryFailure delivery, Action throwIfFatal)
{
    private static readonly TimeSpan FlushLimit = TimeSpan.FromSeconds(60);

    private Task? _writing;

    /// <summary>The JSON of the checkpoint being written; one write at a time uses it, on the writer thread or (waiting) the loop.</summary>
    private readonly System.Buffers.ArrayBufferWriter<byte> _json = new(1 << 16);
    private List<TopicPartitionOffset>? _toCommit;
    // Partitions of the write in flight whose checkpoint another owner's newer one kept out (writer thread, then FinishWrite).
    private readonly HashSet<int> _refused = [];
    private DateTime _writtenAt;

    /// <summary>When the last checkpoint was cut (UTC).</summary>
    public DateTime LastCheckpoint { get; private set; } = DateTime.UtcNow;

    /// <summary>True while a background write has not been collected by <see cref="FinishWrite"/>.</summary>
    public bool Writing => _writing is not null;

    /// <summary>True when a background write has finished and its offsets wait to be committed.</summary>
    public bool WriteCompleted => _writing is { IsCompleted: true };

    /// <summary>
    /// Cuts a checkpoint of <paramref name="states"/> (engines idle: between two batches or in a
    /// rebalance callback) and commits once it is durable. Unless <paramref name="wait"/>, the
    /// loop is held only for the cut: each partition's snapshot is taken by the thread that
    /// drains it next, before its next record (<see cref="PartitionState.DueCut"/>), and waiting
    /// for the acknowledgements, the JSON and the disk write run on a thread of their own; the
    /// commit follows in <see cref="FinishWrite"/>. With <paramref name="wait"/> (revocation,
    /// shutdown) the snapshots are taken here and everything is done before it returns.
    /// </summary>
    public void CheckpointAndCommit(IConsumer<byte[]?, byte[]> events, List<PartitionState> states, bool wait)
    {
        // One write in flight at a time, so two versions of a file never race.
        FinishWrite(events);
        throwIfFatal();
        var clock = Stopwatch.StartNew();
        var now = DateTime.UtcNow;
        // Every output of the records before the cut is in this epoch; later ones go to the next.
        var acknowledged = delivery.Cut();
        var cuts = new List<CheckpointCut>();
        var commits = new List<TopicPartitionOffset>();
        foreach (var state in states.Where(s => s.Dirty))
        {
            var cut = new CheckpointCut(state, options.EventsTopic, options.LabelsTopic, now);
            if (wait)
            {
                cut.Take();
            }
            else
            {
                state.DueCut = cut;
            }
            cuts.Add(cut);
            state.CheckpointedEvents = state.EventsNext;
            state.CheckpointedLabels = state.LabelsNext;
            state.LabelsSinceCheckpoint = 0;
            if (state.EventsNext >= 0)
            {
                commits.Add(new TopicPartitionOffset(options.EventsTopic, state.Partition, state.EventsNext));
            }
        }
        LastCheckpoint = now;
        if (cuts.Count == 0)
        {
            stats.LastCheckpointMs = clock.Elapsed.TotalMilliseconds;
            return;
        }
        _toCommit = commits;
        _refused.Clear();
        _writtenAt = now;
        if (wait)
        {
            WriteAll(acknowledged, cuts);
            stats.LastCheckpointMs = clock.Elapsed.TotalMilliseconds;
            FinishWrite(events);
            return;
        }
        // A thread of its own: it blocks on the snapshots and the broker, never on the pool the drains use.
        _writing = Task.Factory.StartNew(() => WriteAll(acknowledged, cuts), CancellationToken.None, TaskCreationOptions.LongRunning, TaskScheduler.Default);
        stats.LastCheckpointMs = clock.Elapsed.TotalMilliseconds;
    }

    private void WriteAll(DeliveryEpoch acknowledged, List<CheckpointCut> cuts)
    {
        var clock = Stopwatch.StartNew();
        acknowledged.Wait(FlushLimit, throwIfFatal);
        stats.LastFlushMs = clock.Elapsed.TotalMilliseconds;
        double snapshots = 0;
        foreach (var cut in cuts)
        {
            var checkpoint = cut.Wait();
            snapshots += cut.SnapshotMs;
            // Serialised once, into the buffer every checkpoint reuses: the file and the topic carry the same bytes.
            CheckpointStore.Serialize(checkpoint, _json);
            var json = _json.WrittenMemory;
            // The topic's copy is written under the file's lock, so with a shared folder it never
            // goes back either. Its keys are this worker's own, so another owner's writes never
            // make what this one remembers of them out of date.
            var kept = store.Write(checkpoint, json, topic is null ? null : () => topic.Write(checkpoint, json));
            // Written: the engines' copies of their stores go back for the next checkpoint.
            checkpoint.Snapshot.ReleaseCopies();
            checkpoint.Challengers?.ForEach(c => c.Snapshot.ReleaseCopies());
            if (kept is { } newer)
            {
                // Two owners at once: this member, or the other, has not yet noticed the group moved on.
                Log.Warning("Partition {Partition}: another owner wrote a newer checkpoint (events offset {NewerEvents}, labels offset {NewerLabels}) than this one (events offset {EventsOffset}, labels offset {LabelsOffset}); keeping it, and committing nothing for the partition",
                    checkpoint.Partition, newer.EventsOffset, newer.LabelsOffset, checkpoint.EventsOffset, checkpoint.LabelsOffset);
                _refused.Add(checkpoint.Partition);
            }
        }
        stats.LastSnapshotMs = snapshots;
        stats.LastWriteMs = clock.Elapsed.TotalMilliseconds;
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
                // Unacknowledged outputs, or the checkpoint topic did not acknowledge: nothing of this write may be committed.
                _toCommit = null;
                throw;
            }
            catch
            {
                _toCommit = null;
                throw;
            }
        }
        if (_toCommit is not { } commits)
        {
            return;
        }
        _toCommit = null;
        // Committing a refused partition would move the group's offset back behind the other owner's.
        commits.RemoveAll(c => _refused.Contains(c.Partition.Value));
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
