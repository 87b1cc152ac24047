using System.Runtime.ExceptionServices;
using Driftline.Kafka.Options;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Runs the partitions' queued records through their engines, in merged order and as far as
/// the merge allows: side by side (each engine has its own sink and parser) on up to
/// <see cref="DrainThreads"/> pool threads and the loop thread, at most one batch at a time.
/// <see cref="Start"/> hands a batch to the pool so the loop thread can fetch the next one
/// meanwhile; <see cref="Finish"/> drains what the pool has not taken yet and waits for the
/// rest. Owned by the worker loop: only the loop thread calls it, and it touches the
/// partitions' queues, engines and positions only while a batch is in flight (the loop leaves
/// them alone until <see cref="Finish"/> returns).
/// </summary>
internal sealed class PartitionDrainer(KafkaOptions options)
{
    private Batch? _inFlight;

    /// <summary>Sees each record before and after its engine (the latency benchmark), or null.</summary>
    public IRecordProbe? Probe { get; set; }

    /// <summary>True while a batch started by <see cref="Start"/> has not been collected by <see cref="Finish"/>.</summary>
    public bool InFlight => _inFlight is not null;

    /// <summary>
    /// Starts draining <paramref name="busy"/> on the pool and returns at once; a batch
    /// already in flight must be finished first. An empty list starts nothing.
    /// </summary>
    public void Start(List<PartitionState> busy)
    {
        if (_inFlight is not null)
        {
            throw new InvalidOperationException("a drain is already in flight");
        }
        if (busy.Count == 0)
        {
            return;
        }
        var batch = new Batch(busy, Environment.TickCount64, (long)options.LabelHold.TotalMilliseconds);
        batch.Workers = Enumerable.Range(0, Math.Min(DrainThreads, busy.Count)).Select(_ => Task.Run(() => DrainClaimed(batch))).ToArray();
        _inFlight = batch;
    }

    /// <summary>
    /// Waits for the batch in flight, if any, and returns it with the records it processed
    /// (an empty list and 0 when none was in flight). Unless <paramref name="help"/> is false,
    /// the calling thread first drains the batch's partitions that no pool thread has taken
    /// yet, so a loop with nothing else to do lends its core to the engines. An exception
    /// from an engine or a sink is rethrown here; the batch is collected either way, so a
    /// second call returns nothing.
    /// </summary>
    public (List<PartitionState> Drained, int Done) Finish(bool help = true)
    {
        if (_inFlight is not { } batch)
        {
            return ([], 0);
        }
        _inFlight = null;
        Exception? fault = null;
        if (help)
        {
            try
            {
                DrainClaimed(batch);
            }
            catch (Exception ex)
            {
                // Stop the pool threads from taking more, then wait for them before rethrowing.
                batch.Claim(batch.Partitions.Count);
                fault = ex;
            }
        }
        try
        {
            Task.WaitAll(batch.Workers);
        }
        catch (AggregateException ex)
        {
            fault ??= ex.InnerExceptions[0];
        }
        if (fault is not null)
        {
            // A partition no thread reached keeps its cut: give it up, so the writer waiting for it stops.
            foreach (var state in batch.Partitions)
            {
                state.DueCut?.Abandon();
                state.DueCut = null;
            }
            ExceptionDispatchInfo.Capture(fault).Throw();
        }
        return (batch.Partitions, batch.Done);
    }

    /// <summary>Drains <paramref name="busy"/> on this thread and the pool and returns the records processed.</summary>
    public int DrainNow(List<PartitionState> busy)
    {
        Start(busy);
        return Finish().Done;
    }

    /// <summary>
    /// Pool threads a batch starts with: one core fewer than the machine has (at least one),
    /// because the loop thread consumes the next batch meanwhile and librdkafka's threads need a
    /// core too; the loop joins in (<see cref="Finish"/>) once it has consumed. On 2 cores a
    /// second pool thread gave the worker 225k msg/s against 251k with one (medians of 7
    /// alternating benchmark runs), and a higher p99 latency (296 ms against 176).
    /// </summary>
    private static readonly int DrainThreads = Math.Max(1, Environment.ProcessorCount - 1);

    /// <summary>Drains partitions of <paramref name="batch"/> one at a time until none is left to take.</summary>
    private void DrainClaimed(Batch batch)
    {
        for (int i = batch.Claim(1); i < batch.Partitions.Count; i = batch.Claim(1))
        {
            batch.Add(Drain(batch.Partitions[i], batch.Now, batch.Hold));
        }
    }

    /// <summary>Runs one partition's records in merged order as far as the merge allows.</summary>
    private int Drain(PartitionState state, long now, long hold)
    {
        if (state.DueCut is { } cut)
        {
            // The state at the cut, before this batch's records: the loop went on meanwhile.
            state.DueCut = null;
            cut.Take();
        }
        int done = 0;
        while (state.TryTakeNext(now, hold, out var record, out bool fromLabels))
        {
            string topic = fromLabels ? options.LabelsTopic! : options.EventsTopic;
            Probe?.Draining(fromLabels, state.Partition, record);
            if (state.Processor!.Process(state.Engine, record, topic, state.Partition))
            {
                state.LabelsSinceCheckpoint++;
            }
            Probe?.Drained(fromLabels, state.Partition, record);
            if (fromLabels)
            {
                state.LabelsNext = record.Offset + 1;
            }
            else
            {
                state.EventsNext = record.Offset + 1;
            }
            done++;
        }
        return done;
    }

    /// <summary>
    /// One batch: its partitions, each taken by exactly one thread (<see cref="Claim"/>), so an
    /// engine and its sink still have one writer at a time.
    /// </summary>
    private sealed class Batch(List<PartitionState> partitions, long now, long hold)
    {
        private int _next = -1;
        private int _done;

        public List<PartitionState> Partitions { get; } = partitions;

        public long Now { get; } = now;

        public long Hold { get; } = hold;

        public Task[] Workers { get; set; } = [];

        public int Done => Volatile.Read(ref _done);

        /// <summary>Takes the next <paramref name="count"/> partitions; returns the index of the first.</summary>
        public int Claim(int count) => Interlocked.Add(ref _next, count) - count + 1;

        public void Add(int records) => Interlocked.Add(ref _done, records);
    }
}
