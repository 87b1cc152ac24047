using System.Diagnostics;
using Driftline.Kafka.Checkpoints;

namespace Driftline.Kafka.Worker;

/// <summary>
/// A checkpoint decided by the loop at a point where the partition's engine is idle, with the
/// positions it must reflect. The snapshot itself is taken by whichever thread drains the
/// partition next, before it processes any record (<see cref="PartitionDrainer"/>), so the
/// state is exactly the one at the cut while the loop goes on consuming; the writer thread
/// waits for it.
/// </summary>
internal sealed class CheckpointCut(PartitionState state, string eventsTopic, string? labelsTopic, DateTime at)
{
    private readonly TaskCompletionSource<PartitionCheckpoint> _taken = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private readonly long _events = state.EventsNext;
    private readonly long _labels = state.LabelsNext;

    /// <summary>The partition.</summary>
    public int Partition => state.Partition;

    /// <summary>How long taking the snapshot took (ms), once taken.</summary>
    public double SnapshotMs { get; private set; }

    /// <summary>
    /// Takes the snapshot now, at the cut's positions; no record of the partition may have been
    /// processed since the cut. A position still unknown at the cut may have become known
    /// meanwhile: the loop thread learns it from an end of partition without touching the
    /// engine, and the checkpoint keeps it unknown, as it was at the cut.
    /// </summary>
    public void Take()
    {
        try
        {
            if (Moved(_events, state.EventsNext) || Moved(_labels, state.LabelsNext))
            {
                throw new InvalidOperationException($"partition {state.Partition} moved past its checkpoint cut before the snapshot was taken");
            }
            var clock = Stopwatch.StartNew();
            var checkpoint = state.ToCheckpoint(eventsTopic, labelsTopic, at, _events, _labels);
            SnapshotMs = clock.Elapsed.TotalMilliseconds;
            _taken.TrySetResult(checkpoint);
        }
        catch (Exception ex)
        {
            _taken.TrySetException(ex);
            throw;
        }
    }

    private static bool Moved(long atCut, long now) => atCut != PartitionState.Unknown && now != atCut;

    /// <summary>Gives the cut up (its batch failed): the writer waiting for it fails and nothing is committed.</summary>
    public void Abandon() => _taken.TrySetException(new KafkaWorkerException($"the checkpoint of partition {state.Partition} was abandoned: its batch failed"));

    /// <summary>Waits for the snapshot (on the writer thread).</summary>
    public PartitionCheckpoint Wait() => _taken.Task.GetAwaiter().GetResult();
}
