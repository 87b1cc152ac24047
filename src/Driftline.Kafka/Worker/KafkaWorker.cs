using Driftline.Core.Alerts;
using Driftline.Core.Challengers;
using System.Collections.Concurrent;
using System.Diagnostics;
using System.Runtime.ExceptionServices;
using Confluent.Kafka;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Options;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The live worker: one member of the consumer group. It owns the events partitions the
/// group gives it, one engine per partition, follows them on the labels topic, and writes
/// predictions, alerts and dead letters through one producer.
/// </summary>
/// <remarks>
/// <para>One loop thread consumes, routes records to their partitions and runs the
/// rebalance callbacks (inside Consume), which is what makes "finish the in-flight work, then
/// give the partition up" exact without locks. The partitions' engines are independent, so
/// each batch is drained partition by partition side by side on the pool
/// (<see cref="PartitionDrainer"/>) while the loop consumes the next batch into a staging list
/// (<see cref="RecordIntake"/>); the loop then drains what the pool has not taken of the
/// batch, waits for the rest, queues the staged records and starts the next one. Queues, positions and snapshots are touched by
/// the loop only between two batches, and every rebalance callback first waits for the batch
/// in flight and queues what was staged, so the callbacks see the same state as if the loop
/// had drained in line. librdkafka's own threads fetch ahead and send behind through bounded
/// queues (fetch queue, send queue), with pausing and a full send queue as
/// backpressure.</para>
/// <para>Commit rule: a partition's offset is committed only after every output produced
/// before the checkpoint's cut has been acknowledged by the broker (its delivery epoch, see
/// <see cref="CheckpointCommitter"/>) and the checkpoint holding the engine state at that
/// offset, labels included, is on disk (and, with a checkpoint topic, acknowledged there).
/// The loop only cuts; the partition's next drain takes the snapshot before its next record,
/// and the rest runs on a writer thread. On assignment the worker restores the newer of the file and the
/// topic's copy and seeks both partitions to the offsets it reflects, so a
/// restart or a move never loses or doubles a label; predictions after the checkpoint may be
/// emitted again (at least once).</para>
/// </remarks>
internal sealed class KafkaWorker
{
    private static readonly TimeSpan IdleWait = TimeSpan.FromMilliseconds(50);

    private readonly KafkaOptions _options;
    private readonly DriftlineOptions _core;
    private readonly CheckpointStore _store;
    private readonly Dictionary<int, PartitionState> _partitions = [];
    private readonly DeliveryFailure _delivery = new();
    private IProducer<byte[]?, byte[]>? _producer;
    private IConsumer<byte[]?, byte[]>? _labels;
    private string? _fatal;
    private bool _failed;
    private CheckpointCommitter? _committer;
    private CheckpointLoader? _loader;
    private readonly PartitionDrainer _drainer;
    private readonly RecordIntake _intake;
    private ExceptionDispatchInfo? _drainFault;
    private readonly ConnectionErrorLog _connections;

    /// <summary>Also sees every alert of every partition (called from the partitions' threads; must be thread-safe and not block), or null.</summary>
    public Action<AlertTransition>? AlertObserver { get; init; }

    /// <summary>
    /// Stop with <see cref="KafkaWorkerException.BrokerDown"/> once no broker has been reachable for
    /// this long (from the start, or since the last contact), for orchestrators that restart a
    /// failed container; zero (the default) retries for ever, as librdkafka does.
    /// </summary>
    public TimeSpan ExitAfterBrokerDown { get; init; }

    /// <summary>
    /// Configurations scored in the shadow on every partition and judged against the champion
    /// (<c>run --challenger</c>); they must parse records as the champion does (the same
    /// <c>Monitor:SegmentBy</c> and <c>Model:Classes</c>). Default none.
    /// </summary>
    public IReadOnlyList<ChallengerConfig> Challengers { get; init; } = [];

    /// <summary>Creates a worker (nothing connects until <c>Run</c>).</summary>
    public KafkaWorker(KafkaOptions options, DriftlineOptions core, WorkerStats? stats = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(core);
        _options = options;
        _core = core;
        _store = new CheckpointStore(options.CheckpointDir);
        _drainer = new PartitionDrainer(options);
        Stats = stats ?? new WorkerStats();
        _intake = new RecordIntake(options, _partitions, Stats);
        _connections = new ConnectionErrorLog(ClientSettings.ReconnectBackoffMax(options));
    }

    /// <summary>Running counts.</summary>
    public WorkerStats Stats { get; }

    /// <summary>Sees every record at the worker's stage boundaries (the latency benchmark's breakdown); none by default.</summary>
    public IRecordProbe? Probe
    {
        get => _intake.Probe;
        init => _intake.Probe = _drainer.Probe = _delivery.Probe = value;
    }

    /// <summary>The model keys of the partitions owned now, each with its partition (for tests and operators).</summary>
    public ConcurrentDictionary<string, int> ModelKeys { get; } = new(StringComparer.Ordinal);

    /// <summary>Partitions owned now.</summary>
    public ConcurrentDictionary<int, bool> Owned { get; } = new();

    private bool HasLabels => _options.LabelsTopic is not null;

    /// <summary>
    /// Runs until <paramref name="stop"/> is cancelled, then checkpoints, commits, leaves the
    /// group and returns. Throws <see cref="KafkaWorkerException"/> on a fatal error, after
    /// leaving without committing anything more.
    /// </summary>
    public void Run(CancellationToken stop)
    {
        Log.Information("Worker joining group {Group} at {Bootstrap}: events {EventsTopic}, labels {LabelsTopic}, predictions {PredictionsTopic}, alerts {AlertsTopic}, dead letters {DeadLetterTopic}, checkpoints in {CheckpointDir} and on topic {CheckpointTopic}; client settings {@Client}",
            _options.Group, _options.Bootstrap, _options.EventsTopic, _options.LabelsTopic ?? "(events topic)", _options.PredictionsTopic, _options.AlertsTopic ?? "(log only)", _options.DeadLetterTopic, _store.Directory, _options.CheckpointTopic ?? "(none)", ClientSettings.Masked(_options));
        try
        {
            using var producer = Build(new ProducerBuilder<byte[]?, byte[]>(ClientSettings.Producer(_options))
                .SetErrorHandler((_, e) => OnError("producer", e))
                .SetLogHandler((_, m) => ClientLog.Write("producer", m)));
            _producer = producer;
            TopicChecks.RequireCoPartitioned(producer, _options);
            var topicWriter = _options.CheckpointTopic is { } checkpointTopic
                ? new TopicCheckpointWriter(producer, checkpointTopic, TopicChecks.RequireCheckpointTopic(producer, checkpointTopic))
                : null;
            if (topicWriter is not null)
            {
                Log.Information("Checkpoint topic {CheckpointTopic}: this worker's keys are those of writer {Writer}", topicWriter.Topic, topicWriter.Id);
            }
            RemoveLeftovers();
            _committer = new CheckpointCommitter(_options, _store, topicWriter, Stats, _delivery, ThrowIfFatal);
            _loader = new CheckpointLoader(_options, _store, topicWriter);
            using var labels = HasLabels ? Build(new ConsumerBuilder<byte[]?, byte[]>(ClientSettings.LabelsConsumer(_options))
                .SetErrorHandler((_, e) => OnError("labels consumer", e))
                .SetLogHandler((_, m) => ClientLog.Write("labels consumer", m))) : null;
            _labels = labels;
            using var events = Build(new ConsumerBuilder<byte[]?, byte[]>(ClientSettings.EventsConsumer(_options))
                .SetErrorHandler((_, e) => OnError("events consumer", e))
                .SetLogHandler((_, m) => ClientLog.Write("events consumer", m))
                .SetStatisticsHandler((_, json) => OnStatistics(json))
                .SetPartitionsAssignedHandler((c, assigned) => OnAssigned(c, assigned))
                .SetPartitionsRevokedHandler((c, revoked) => OnRevoked(c, revoked))
                .SetPartitionsLostHandler((c, lost) => OnLost(c, lost)));
            try
            {
                events.Subscribe(_options.EventsTopic);
                Stats.LastBrokerContact = DateTime.UtcNow;
                Stats.Running = true;
                Loop(events, stop);
                ThrowIfFatal();
                _committer!.CheckpointAndCommit(events, _partitions.Values.ToList(), wait: true);
                Drop(_partitions.Keys.ToList());
            }
            catch
            {
                _failed = true;
                AbandonDrain();
                throw;
            }
            finally
            {
                Stats.Running = false;
                // Close leaves the group now (a rebalance in milliseconds, not a session timeout).
                Close(events, "events consumer");
                if (labels is not null)
                {
                    Close(labels, "labels consumer");
                }
            }
            Log.Information("Worker left group {Group}: {Events} events in, {Predictions} predictions, {Labels} labels joined, {DeadLetters} dead letters, {Checkpoints} checkpoints",
                _options.Group, Stats.EventsIn, Stats.Predictions, Stats.LabelsJoined, Stats.DeadLetters, Stats.Checkpoints);
        }
        catch (KafkaException ex) when (ex is not ConsumeException)
        {
            throw new KafkaWorkerException($"Kafka client error: {ex.Error.Reason} ({ex.Error.Code})", ex);
        }
        catch (ConsumeException ex) when (ex.InnerException is KafkaWorkerException inner)
        {
            // Thrown in a rebalance callback, which the client wraps.
            throw new KafkaWorkerException(inner.Message, inner);
        }
        catch (ConsumeException ex)
        {
            throw new KafkaWorkerException(_fatal ?? $"Kafka consume failed: {ex.Error.Reason} ({ex.Error.Code})", ex.InnerException ?? ex);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new KafkaWorkerException($"cannot write a checkpoint in '{_store.Directory}': {ex.Message}", ex);
        }
        catch (ArgumentException ex)
        {
            throw new KafkaWorkerException($"Kafka client setting rejected: {ex.Message}", ex);
        }
    }

    private void Loop(IConsumer<byte[]?, byte[]> events, CancellationToken stop)
    {
        bool idle = false;
        while (!stop.IsCancellationRequested)
        {
            ThrowIfFatal();
            // While the engines drain the last batch on the pool, this thread fetches the next one.
            int got = _intake.Pull(events, fromLabels: false, idle ? IdleWait : TimeSpan.Zero);
            if (_labels is not null)
            {
                got += _intake.Pull(_labels, fromLabels: true, TimeSpan.Zero);
            }
            ThrowIfFatal();
            // From here to StartDrain the engines are idle: queues, positions and snapshots are the loop's.
            int done = FinishDrain(events);
            idle = got == 0 && done == 0;
            // With no broker, a commit or a producer flush would hold the loop until its own time-out
            // (47 s for a commit seen on the mock), and with it health and the broker-down limit.
            // Both wait for the broker instead: deferring a checkpoint or a commit is always safe.
            bool reachable = Stats.BrokerReachable;
            if (reachable && _committer!.WriteCompleted)
            {
                _committer.FinishWrite(events);
            }
            var now = DateTime.UtcNow;
            // A checkpoint still being written defers the next one rather than holding the loop for it.
            if (reachable && !_committer!.Writing && (_partitions.Values.Any(p => p.LabelsSinceCheckpoint >= _options.CheckpointEveryLabels)
                || (now - _committer!.LastCheckpoint >= _options.CheckpointEvery && _partitions.Values.Any(p => p.Dirty))))
            {
                _committer!.CheckpointAndCommit(events, _partitions.Values.Where(p => p.Dirty).ToList(), wait: false);
                Stats.Lag = TopicChecks.Lag(events, _options.EventsTopic, _partitions.Values);
            }
            ApplyStaged(events);
            _drainer.Start(Busy());
        }
        FinishDrain(events);
    }

    /// <summary>Queues the staged records on their partitions (engines idle).</summary>
    private void ApplyStaged(IConsumer<byte[]?, byte[]> events)
    {
        Debug.Assert(!_drainer.InFlight, "the partitions' queues belong to the drain in flight");
        _intake.ApplyStaged(events, _labels);
    }

    /// <summary>The partitions with records queued or a checkpoint cut to snapshot (so no cut outlives the next batch).</summary>
    private List<PartitionState> Busy() => _partitions.Values.Where(s => s.Events.Count + s.Labels.Count > 0 || s.DueCut is not null).ToList();

    /// <summary>Waits for the batch in flight, if any, and collects its counts, model keys and resumes; returns the records it processed.</summary>
    private int FinishDrain(IConsumer<byte[]?, byte[]> events)
    {
        var (drained, done) = _drainer.Finish();
        AfterDrain(events, drained);
        return done;
    }

    /// <summary>
    /// <see cref="FinishDrain"/> inside a rebalance callback: a failed batch is kept for the
    /// loop to rethrow (the client would wrap it), and marks the engines unusable, so the
    /// callback gives the partitions up without a checkpoint.
    /// </summary>
    private void SettleDrain(IConsumer<byte[]?, byte[]> events)
    {
        try
        {
            FinishDrain(events);
        }
        catch (Exception ex)
        {
            _drainFault ??= ExceptionDispatchInfo.Capture(ex);
        }
    }

    /// <summary>
    /// Finishes what the merge of <paramref name="states"/> can take now, on this thread and the
    /// pool (engines idle otherwise). Only the partitions given up: the group waits for this
    /// callback, and the partitions kept are drained by the loop as usual right after it.
    /// </summary>
    private void ProcessReady(IConsumer<byte[]?, byte[]> events, List<PartitionState> states)
    {
        var busy = states.Where(s => s.Events.Count + s.Labels.Count > 0).ToList();
        _drainer.DrainNow(busy);
        AfterDrain(events, busy);
    }

    private void AfterDrain(IConsumer<byte[]?, byte[]> events, List<PartitionState> drained)
    {
        foreach (var state in drained)
        {
            if (!_partitions.ContainsKey(state.Partition))
            {
                continue; // given up while it drained: its counts and keys went with it
            }
            if (state.Counts.LastMetrics is { } row)
            {
                state.LastMetrics = row;
            }
            state.Counts.MoveTo(Stats);
            if (state.Panel is { } panel)
            {
                foreach (var promoted in panel.Promotions)
                {
                    Stats.Challengers.TryRemove((promoted.Challenger, state.Partition), out _);
                }
                foreach (var c in panel.Challengers)
                {
                    Stats.Challengers[(c.Name, state.Partition)] = new ChallengerFigures(c.Judge.ChampionLogLoss, c.Judge.ChallengerLogLoss,
                        Ece(state.LastMetrics), Ece(state.ChallengerSinks[c.Name].LastMetrics), c.Judge.Evidence, c.Judge.Threshold, c.Judge.Paired, c.Judge.DecidedAt.Count);
                }
            }
            foreach (var model in state.Engine.Models.Skip(state.KnownModels))
            {
                ModelKeys[model.Key] = state.Partition;
            }
            state.KnownModels = state.Engine.Models.Count;
            _intake.Resume(events, state, fromLabels: false);
            _intake.Resume(_labels, state, fromLabels: true);
        }
    }

    private static double Ece(MetricsRow? row) => row is { } r && r.Window.IsReady ? r.Window.Ece : double.NaN;

    private List<TopicPartitionOffset> OnAssigned(IConsumer<byte[]?, byte[]> events, List<TopicPartition> assigned)
    {
        // An assignment (even an empty one) is an answer from the group coordinator.
        Stats.GroupJoined = true;
        Stats.BrokerReachable = true;
        Stats.LastBrokerContact = DateTime.UtcNow;
        var clock = Stopwatch.StartNew();
        // Records consumed before this callback belong to the partitions owned before it.
        SettleDrain(events);
        ApplyStaged(events);
        var start = new List<TopicPartitionOffset>();
        var labels = new List<TopicPartitionOffset>();
        Dictionary<int, PartitionCheckpoint?> checkpoints;
        if (assigned.Count > 0)
        {
            // A partition that moves here may come from a member killed in the middle of a write.
            RemoveLeftovers();
        }
        try
        {
            checkpoints = _loader!.Load(assigned.Select(tp => tp.Partition.Value).ToList());
        }
        catch (KafkaWorkerException ex)
        {
            _fatal = ex.Message;
            throw;
        }
        foreach (var tp in assigned)
        {
            var checkpoint = checkpoints[tp.Partition.Value];
            var counts = new OutputCounts();
            var outputs = new KafkaOutputs(_producer!, _options.PredictionsTopic, _options.AlertsTopic, _options.DeadLetterTopic, counts, _delivery, AlertObserver);
            var engine = checkpoint is null ? new ScoringEngine(_core, outputs) : ScoringEngine.Restore(checkpoint.Snapshot, outputs);
            var processor = new RecordProcessor(outputs, counts, _core.Input);
            var state = new PartitionState(tp.Partition.Value, engine, checkpoint, HasLabels)
            {
                Processor = processor,
                Counts = counts,
                KnownModels = engine.Models.Count,
            };
            if (Challengers.Count > 0)
            {
                state.Panel = processor.Panel = Panel(state, checkpoint, outputs, counts);
            }
            _partitions[state.Partition] = state;
            Owned[state.Partition] = true;
            foreach (var model in engine.Models)
            {
                ModelKeys[model.Key] = state.Partition;
            }
            start.Add(new TopicPartitionOffset(tp, state.EventsNext >= 0 ? new Offset(state.EventsNext) : Offset.Unset));
            if (HasLabels)
            {
                labels.Add(new TopicPartitionOffset(_options.LabelsTopic!, tp.Partition, state.LabelsNext >= 0 ? new Offset(state.LabelsNext) : Offset.Beginning));
            }
            if (checkpoint is null)
            {
                Log.Information("Partition {Partition} assigned: no checkpoint, fresh models from the group's committed offset (or the start)", state.Partition);
            }
            else
            {
                Log.Information("Partition {Partition} assigned: restored {Models} models from the checkpoint of {WrittenAt:o}, resuming at events offset {EventsOffset}, labels offset {LabelsOffset}",
                    state.Partition, engine.Models.Count, checkpoint.WrittenAt, checkpoint.EventsOffset, checkpoint.LabelsOffset);
            }
        }
        _labels?.IncrementalAssign(labels);
        Stats.Partitions = _partitions.Count;
        if (assigned.Count > 0)
        {
            // The group waits for this callback: its length is part of every move's pause.
            Log.Information("Assignment of {Count} partitions ready in {Elapsed:0} ms", assigned.Count, clock.Elapsed.TotalMilliseconds);
        }
        return start;
    }

    /// <summary>
    /// The partition's challengers: each restored by name from the checkpoint when it holds one
    /// (engine and evidence at the checkpoint's offsets), fresh otherwise; one the checkpoint
    /// records as promoted is the champion now and is not started again. A fresh challenger
    /// beside a restored champion has none of the predictions waiting for labels: those labels
    /// are graded by the champion alone and left unpaired. The judging policy is the run's
    /// (<c>Challengers</c> of the champion's configuration), also after a promotion.
    /// </summary>
    private ChallengerPanel Panel(PartitionState state, PartitionCheckpoint? checkpoint, KafkaOutputs outputs, OutputCounts counts)
    {
        int partition = state.Partition;
        var panel = new ChallengerPanel(state.Engine, _core.Challengers, snapshot => state.Engine = ScoringEngine.Restore(snapshot, outputs))
        {
            Decided = _ => counts.ChallengerDecisions++,
            Promoted = (p, _) => Log.Warning("Partition {Partition}: challenger {Challenger} promoted to champion at label {Labels} (Challengers:AutoPromote); the previous champion is dropped", partition, p.Challenger, p.Labels),
        };
        panel.Promotions.AddRange(checkpoint?.Promotions ?? []);
        foreach (var config in Challengers.Where(c => !panel.Promotions.Any(p => p.Challenger == c.Name)))
        {
            var sink = new ChallengerSink(config.Name, _producer, _options.ChallengerTopic, _delivery, counts);
            var saved = checkpoint?.Challengers?.FirstOrDefault(c => string.Equals(c.Name, config.Name, StringComparison.Ordinal));
            var engine = saved is null ? new ScoringEngine(config.Options, sink) : ScoringEngine.Restore(saved.Snapshot, sink);
            var entry = panel.Add(config.Name, engine);
            if (saved?.Judge is { } evidence)
            {
                entry.Judge.Import(evidence);
            }
            state.ChallengerSinks[config.Name] = sink;
            if (saved is null && checkpoint is not null)
            {
                Log.Information("Partition {Partition}: challenger {Challenger} is not in the checkpoint and starts fresh", partition, config.Name);
            }
        }
        return panel;
    }

    private void OnRevoked(IConsumer<byte[]?, byte[]> events, List<TopicPartitionOffset> revoked)
    {
        var clock = Stopwatch.StartNew();
        SettleDrain(events);
        var states = revoked.Select(tp => _partitions.GetValueOrDefault(tp.Partition.Value)).OfType<PartitionState>().ToList();
        if (states.Count == 0)
        {
            ApplyStaged(events);
            return;
        }
        if (_failed || _fatal is not null || _drainFault is not null)
        {
            Drop(states.Select(s => s.Partition).ToList());
            return;
        }
        // Finish what is in flight (records consumed, and what the merge can take now), make it durable, commit, give up.
        ApplyStaged(events);
        ProcessReady(events, states);
        _committer!.CheckpointAndCommit(events, states, wait: true);
        Drop(states.Select(s => s.Partition).ToList());
        Log.Information("Partitions {Partitions} revoked: checkpointed and committed in {Elapsed:0} ms", states.Select(s => s.Partition).ToArray(), clock.Elapsed.TotalMilliseconds);
    }

    private void OnLost(IConsumer<byte[]?, byte[]> events, List<TopicPartitionOffset> lost)
    {
        SettleDrain(events);
        ApplyStaged(events);
        // Another member may own them already: no checkpoint, no commit, just forget them.
        var partitions = lost.Select(tp => tp.Partition.Value).Where(_partitions.ContainsKey).ToList();
        Drop(partitions);
        Log.Warning("Partitions {Partitions} lost (fell out of the group): dropped without committing", partitions.ToArray());
    }

    /// <summary>Removes the temporary checkpoint files of ended processes (never a live worker's) from the folder.</summary>
    private void RemoveLeftovers()
    {
        int removed = _store.RemoveLeftovers();
        if (removed > 0)
        {
            Log.Information("Removed {Count} temporary checkpoint files that ended workers left in {CheckpointDir}", removed, _store.Directory);
        }
    }

    private void Drop(List<int> partitions)
    {
        if (partitions.Count == 0)
        {
            return;
        }
        foreach (int p in partitions)
        {
            _partitions.Remove(p);
            Owned.TryRemove(p, out _);
            foreach (var key in ModelKeys.Where(kv => kv.Value == p).Select(kv => kv.Key).ToList())
            {
                ModelKeys.TryRemove(key, out _);
            }
            foreach (var key in Stats.Challengers.Keys.Where(k => k.Partition == p).ToList())
            {
                Stats.Challengers.TryRemove(key, out _);
            }
        }
        if (_labels is not null && !_failed)
        {
            _labels.IncrementalUnassign(partitions.Select(p => new TopicPartition(_options.LabelsTopic!, p)).ToList());
        }
        Stats.Partitions = _partitions.Count;
    }

    private void OnError(string client, Error error)
    {
        if (error.IsFatal)
        {
            Interlocked.CompareExchange(ref _fatal, $"fatal Kafka error in the {client}: {error.Reason} ({error.Code})", null);
            return;
        }
        // librdkafka recovers from the rest by itself (brokers down, reconnects): tell the operator only,
        // and a broker that stays down once per back-off interval, not once per attempt.
        if (ConnectionErrorLog.IsConnectionError(error))
        {
            if (error.Code == ErrorCode.Local_AllBrokersDown)
            {
                // Sooner than the next statistics, so the loop stops committing at once.
                Stats.BrokerReachable = false;
            }
            _connections.Add(client, error);
            return;
        }
        Log.Warning("Kafka {Client}: {Reason} ({Code})", client, error.Reason, error.Code);
    }

    /// <summary>The events consumer's statistics (on the loop thread, inside Consume): broker contact for health and <see cref="ExitAfterBrokerDown"/>.</summary>
    private void OnStatistics(string json)
    {
        bool wasReachable = Stats.BrokerReachable;
        if (BrokerContact.Apply(json, Stats, DateTime.UtcNow) && !wasReachable)
        {
            _connections.Recovered();
        }
    }

    private void ThrowIfBrokerDown()
    {
        if (ExitAfterBrokerDown <= TimeSpan.Zero || Stats.BrokerReachable)
        {
            return;
        }
        var down = DateTime.UtcNow - Stats.LastBrokerContact;
        if (down >= ExitAfterBrokerDown)
        {
            throw new KafkaWorkerException($"no Kafka broker reachable at {_options.Bootstrap} for {down.TotalSeconds:0} s since the last contact (Worker:ExitAfterBrokerDown {ExitAfterBrokerDown:c}); stopping so the orchestrator can restart the worker")
            {
                BrokerDown = true,
            };
        }
    }

    private static void Close(IConsumer<byte[]?, byte[]> consumer, string client)
    {
        try
        {
            consumer.Close();
        }
        catch (KafkaException ex)
        {
            // Leaving late is harmless (the group notices at the session timeout) and must not hide why the loop ended.
            Log.Warning("Closing the {Client} failed: {Reason}", client, ex.Error.Reason);
        }
    }

    /// <summary>On the way out after a failure: lets a batch in flight end (it uses the producer) without adding its error to the one that stops the worker.</summary>
    private void AbandonDrain()
    {
        try
        {
            _drainer.Finish(help: false);
        }
        catch (Exception ex)
        {
            Log.Debug(ex, "A drain in flight failed as well while the worker stopped");
        }
    }

    private void ThrowIfFatal()
    {
        _drainFault?.Throw();
        string? fatal = Volatile.Read(ref _fatal) ?? _delivery.Error;
        if (fatal is not null)
        {
            throw new KafkaWorkerException(fatal);
        }
        // Also inside a producer flush, which calls this every 500 ms: the producer's own
        // all-brokers-down error marks the broker unreachable while the loop waits there.
        ThrowIfBrokerDown();
    }

    private static IProducer<byte[]?, byte[]> Build(ProducerBuilder<byte[]?, byte[]> builder) => Build(builder.Build);

    private static IConsumer<byte[]?, byte[]> Build(ConsumerBuilder<byte[]?, byte[]> builder) => Build(builder.Build);

    private static T Build<T>(Func<T> build)
    {
        try
        {
            return build();
        }
        catch (Exception ex) when (ex is InvalidOperationException or ArgumentException)
        {
            // librdkafka refuses unknown or malformed settings here, before any connection.
            throw new KafkaWorkerException($"Kafka client setting rejected: {ex.Message}", ex);
        }
    }
}
