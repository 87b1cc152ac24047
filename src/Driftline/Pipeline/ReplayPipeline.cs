using System.Text;
using System.Threading.Channels;
using Driftline.Core.Events;
using Driftline.Core.Features;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Output;

namespace Driftline.Pipeline;

/// <summary>
/// read and parse → score/learn → write, three stages joined by bounded channels. Batches
/// circulate through pools, so memory is fixed whatever the input size, and a slow disk
/// slows the reader instead of filling memory. A failing stage completes its downstream
/// channel with the exception, which surfaces from <c>RunAsync</c>. Several configurations
/// run as lanes of one pipeline: each record is parsed once and handed to every lane's engine,
/// so they are compared on identical input at the cost of one parse.
/// </summary>
internal sealed class ReplayPipeline
{
    private const int BatchesInFlight = 4;

    private readonly ReplayLane[] _lanes;
    private readonly EventParser _parser = new();

    /// <summary>Creates a pipeline around a fresh engine for <paramref name="options"/>.</summary>
    public ReplayPipeline(DriftlineOptions options)
        : this([new ReplayLane(options)])
    {
    }

    /// <summary>
    /// Creates a pipeline that parses each record once and hands it to every lane in turn
    /// (one engine per configuration).
    /// </summary>
    /// <exception cref="ArgumentException"><paramref name="lanes"/> is empty.</exception>
    public ReplayPipeline(IReadOnlyList<ReplayLane> lanes)
    {
        ArgumentNullException.ThrowIfNull(lanes);
        ArgumentOutOfRangeException.ThrowIfZero(lanes.Count, nameof(lanes));
        _lanes = [.. lanes];
        // One parse serves every lane, so they share the segment feature (replay checks that they agree).
        _parser.SegmentFeature = _lanes[0].Engine.Options.Monitor.SegmentBy;
        // Likewise the size limits: the first configuration's Input section applies to the read.
        _parser.MaxTextBytes = _lanes[0].Engine.Options.Input.MaxTextBytes;
        _parser.Classes = _lanes[0].Engine.Options.Model.Classes;
    }

    /// <summary>The lanes, in the order given.</summary>
    public IReadOnlyList<ReplayLane> Lanes => _lanes;

    /// <summary>The first lane's engine, for the summary and the saved model once the run is over.</summary>
    public ScoringEngine Engine => _lanes[0].Engine;

    /// <summary>Records the first lane rejected (malformed, refused, or labels that graded nothing).</summary>
    public long DeadLetters => _lanes[0].DeadLetters;

    /// <summary>Lines read, blank ones included.</summary>
    public long Lines { get; private set; }

    /// <summary>Input bytes scored so far (line breaks counted as one byte), for progress against the file length.</summary>
    public long BytesRead { get; private set; }

    /// <summary>Records the text of feature names the parser meets, for <c>inspect</c>; null records nothing.</summary>
    public FeatureNames? Names
    {
        get => _parser.Names;
        init => _parser.Names = value;
    }

    /// <summary>
    /// True when the run ended on the caller's cancellation (a signal) before the end of the
    /// input: every batch scored was written, the rest of the input was not read.
    /// </summary>
    public bool Stopped { get; private set; }

    /// <summary>Called on the scoring thread after each batch (progress reporting); may be null.</summary>
    public Action<ScoringEngine>? AfterBatch { get; init; }

    /// <summary>The champion (the first lane) and its challengers, settled after each record (a promotion happens there); null without challengers.</summary>
    public Core.Challengers.ChallengerPanel? Panel { get; init; }

    /// <summary>
    /// Monitor mode: only external probabilities (<c>{"id","p","label"}</c>) and label-only
    /// records are taken; an event without <c>p</c> is dead-lettered, and features are ignored.
    /// </summary>
    public bool ProbabilitiesOnly { get; init; }

    /// <summary>
    /// Grade labels on a stage of their own between scoring and writing (the default), when
    /// every lane's engine allows it (<see cref="ScoringEngine.CanDeferGrading"/>); false grades
    /// on the scoring thread. The outputs are the same either way.
    /// </summary>
    public bool GradingStage { get; init; } = true;

    /// <summary>Runs the whole input through the engine into <paramref name="outputs"/>.</summary>
    public Task RunAsync(Stream input, ReplayOutputs outputs, CancellationToken cancellation) => RunAsync(input, [outputs], cancellation);

    /// <summary>Runs the whole input through the first lane, handing each result batch to <paramref name="write"/> (on the writer stage).</summary>
    public Task RunAsync(Stream input, Action<OutputBatch> write, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(write);
        return RunCoreAsync(input, batches => write(batches[0]), cancellation);
    }

    /// <summary>Runs the whole input through every lane, lane i writing into <paramref name="outputs"/>[i].</summary>
    /// <exception cref="ArgumentException">There is not one output per lane.</exception>
    public Task RunAsync(Stream input, IReadOnlyList<ReplayOutputs> outputs, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(outputs);
        if (outputs.Count != _lanes.Length)
        {
            throw new ArgumentException($"{outputs.Count} outputs for {_lanes.Length} lanes", nameof(outputs));
        }
        return RunCoreAsync(input, batches =>
        {
            for (int l = 0; l < batches.Length; l++)
            {
                outputs[l].Write(batches[l]);
            }
        }, cancellation);
    }

    private async Task RunCoreAsync(Stream input, Action<OutputBatch[]> write, CancellationToken cancellation)
    {
        var linePool = Pool<LineBatch>();
        var outputPool = Channel.CreateBounded<OutputBatch[]>(new BoundedChannelOptions(BatchesInFlight + 2) { SingleReader = true, SingleWriter = false, FullMode = BoundedChannelFullMode.Wait });
        for (int i = 0; i < BatchesInFlight + 2; i++)
        {
            outputPool.Writer.TryWrite([.. _lanes.Select(_ => new OutputBatch())]);
        }
        var lines = Channel.CreateBounded<LineBatch>(new BoundedChannelOptions(BatchesInFlight) { SingleReader = true, SingleWriter = true, FullMode = BoundedChannelFullMode.Wait });
        var results = Channel.CreateBounded<OutputBatch[]>(new BoundedChannelOptions(BatchesInFlight) { SingleReader = true, SingleWriter = true, FullMode = BoundedChannelFullMode.Wait });
        // Grading (windows, totals, rules, segments, report samples) is the largest part of the
        // scoring thread's work and nothing scored later depends on it, so it runs on a stage of
        // its own fed each batch's labels in order (tests/Driftline.Benchmarks README).
        bool defer = GradingStage && _lanes.All(l => l.Engine.CanDeferGrading);
        var scored = defer
            ? Channel.CreateBounded<OutputBatch[]>(new BoundedChannelOptions(BatchesInFlight) { SingleReader = true, SingleWriter = true, FullMode = BoundedChannelFullMode.Wait })
            : results;

        // One stage failing stops the others, and its exception (not their cancellation) surfaces.
        // A stop asked by the caller (a signal) is not a failure: the reader stops, the scorer
        // finishes the batch in hand, and the writer writes every batch that was scored.
        using var failed = new CancellationTokenSource();
        using var reading = CancellationTokenSource.CreateLinkedTokenSource(cancellation, failed.Token);
        // A pipe or a terminal read blocks until data comes; the stop must not wait for it.
        var source = input.CanSeek ? input : new StopResponsiveStream(input);
        Task[] stages =
        [
            // Each batch is parsed on the reading thread before it is handed on: a parse stage of
            // its own cost more in hand-offs between the two cores than it saved
            // (tests/Driftline.Benchmarks replay, same-run A/B).
            Stage(() => LineReader.RunAsync(source, _parser, linePool.Reader, lines.Writer, reading.Token, _lanes[0].Engine.Options.Input.MaxLineBytes), failed, cancellation),
            Stage(() => ScoreAsync(lines.Reader, linePool.Writer, outputPool.Reader, scored.Writer, defer, failed.Token, cancellation), failed, cancellation),
            Stage(() => WriteAsync(results.Reader, outputPool.Writer, write, failed.Token), failed, cancellation),
            defer ? Stage(() => GradeAsync(scored.Reader, results.Writer, failed.Token), failed, cancellation) : Task.CompletedTask,
        ];
        try
        {
            await Task.WhenAll(stages).ConfigureAwait(false);
        }
        catch (Exception) when (stages.FirstOrDefault(t => t.IsFaulted && t.Exception!.InnerException is not OperationCanceledException) is { } failure)
        {
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(failure.Exception!.InnerException!);
        }
        finally
        {
            foreach (var lane in _lanes)
            {
                lane.Engine.DeferGradingTo(null);
                lane.Sink.Graded = null;
            }
        }
    }

    private static Task Stage(Func<Task> body, CancellationTokenSource failed, CancellationToken stop) =>
        Task.Run(async () =>
        {
            try
            {
                await body().ConfigureAwait(false);
            }
            catch (OperationCanceledException) when (stop.IsCancellationRequested && !failed.IsCancellationRequested)
            {
                // Stopped on request: the stages downstream finish what they hold.
            }
            catch
            {
                await failed.CancelAsync().ConfigureAwait(false);
                throw;
            }
        });

    private async Task ScoreAsync(ChannelReader<LineBatch> input, ChannelWriter<LineBatch> linePool,
        ChannelReader<OutputBatch[]> outputPool, ChannelWriter<OutputBatch[]> output, bool defer, CancellationToken cancellation, CancellationToken stop)
    {
        try
        {
            while (await WaitForLinesAsync(input, cancellation, stop).ConfigureAwait(false))
            {
                while (!stop.IsCancellationRequested && input.TryRead(out var batch))
                {
                    var result = await outputPool.ReadAsync(cancellation).ConfigureAwait(false);
                    for (int l = 0; l < _lanes.Length; l++)
                    {
                        result[l].Clear();
                        _lanes[l].Sink.Current = result[l];
                        if (defer)
                        {
                            _lanes[l].Engine.DeferGradingTo(result[l].Grading);
                        }
                    }
                    for (int i = 0; i < batch.Count; i++)
                    {
                        ProcessLine(batch, i, result);
                    }
                    Lines += batch.Count;
                    BytesRead += batch.Bytes + batch.Count + batch.SkippedBytes;
                    await linePool.WriteAsync(batch, cancellation).ConfigureAwait(false);
                    AfterBatch?.Invoke(Engine);
                    await output.WriteAsync(result, cancellation).ConfigureAwait(false);
                }
            }
            Stopped = stop.IsCancellationRequested;
            output.Complete();
        }
        catch (Exception ex)
        {
            output.Complete(ex);
            throw;
        }
    }

    // False at the end of the input, or once a stop is asked (batches read but not scored are dropped).
    private static async Task<bool> WaitForLinesAsync(ChannelReader<LineBatch> input, CancellationToken cancellation, CancellationToken stop)
    {
        if (stop.IsCancellationRequested)
        {
            return false;
        }
        try
        {
            return await input.WaitToReadAsync(cancellation).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (stop.IsCancellationRequested && !cancellation.IsCancellationRequested)
        {
            // The reader stopped on the request and completed the channel with its cancellation.
            return false;
        }
    }

    private void ProcessLine(LineBatch batch, int i, OutputBatch[] results)
    {
        var line = batch.Line(i);
        long lineNumber = batch.FirstLine + i;
        if (batch.Error(i) is { } error)
        {
            for (int l = 0; l < _lanes.Length; l++)
            {
                Reject(_lanes[l], lineNumber, error, line, results[l]);
            }
            return;
        }
        if (batch.IsBlank(i))
        {
            return;
        }
        // Every lane sees the same parsed record; engines only read it.
        var record = batch.Record(i);
        if (ProbabilitiesOnly && record.Kind == RecordKind.Event)
        {
            if (double.IsNaN(record.Probability))
            {
                for (int l = 0; l < _lanes.Length; l++)
                {
                    Reject(_lanes[l], lineNumber, "monitor mode needs a probability: give \"p\" (a number between 0 and 1) on the record", line, results[l]);
                }
                return;
            }
            record.Kind = RecordKind.Probability;
        }
        for (int l = 0; l < _lanes.Length; l++)
        {
            var lane = _lanes[l];
            switch (lane.Engine.Process(record))
            {
                case StepOutcome.Rejected:
                    Reject(lane, lineNumber, lane.Engine.RejectReason!, line, results[l]);
                    break;
                case StepOutcome.UnknownLabel:
                    Reject(lane, lineNumber, "label for an id with no pending prediction (never scored, or dropped after Labels:MaxAge or Labels:MaxPending)", line, results[l]);
                    break;
                case StepOutcome.DuplicateLabel:
                    Reject(lane, lineNumber, "second label for a prediction that was already graded", line, results[l]);
                    break;
            }
        }
        // Every lane has taken the record: a challenger declared better on it may now serve.
        Panel?.Settle();
    }

    private static void Reject(ReplayLane lane, long lineNumber, string reason, ReadOnlySpan<byte> line, OutputBatch result)
    {
        lane.DeadLetters++;
        string raw = Encoding.UTF8.GetString(line.Length > DeadLetter.MaxRawChars * 4 ? line[..(DeadLetter.MaxRawChars * 4)] : line);
        if (raw.Length > DeadLetter.MaxRawChars)
        {
            raw = raw[..DeadLetter.MaxRawChars];
        }
        result.DeadLetters.Add(new DeadLetter(lineNumber, reason, raw));
    }

    // The grading stage: each lane's labels of a batch graded in order, their alerts and metric
    // rows added to that batch, which then goes on to the writer.
    private async Task GradeAsync(ChannelReader<OutputBatch[]> input, ChannelWriter<OutputBatch[]> output, CancellationToken cancellation)
    {
        try
        {
            while (await input.WaitToReadAsync(cancellation).ConfigureAwait(false))
            {
                while (input.TryRead(out var batch))
                {
                    for (int l = 0; l < _lanes.Length; l++)
                    {
                        var lane = _lanes[l];
                        lane.Sink.Graded = batch[l];
                        lane.Engine.GradeDeferred(batch[l].Grading);
                        lane.Sink.Graded = null;
                    }
                    await output.WriteAsync(batch, cancellation).ConfigureAwait(false);
                }
            }
            await input.Completion.ConfigureAwait(false);
            output.Complete();
        }
        catch (Exception ex)
        {
            output.Complete(ex);
            throw;
        }
    }

    private static async Task WriteAsync(ChannelReader<OutputBatch[]> input, ChannelWriter<OutputBatch[]> pool, Action<OutputBatch[]> write, CancellationToken cancellation)
    {
        while (await input.WaitToReadAsync(cancellation).ConfigureAwait(false))
        {
            while (input.TryRead(out var batch))
            {
                write(batch);
                await pool.WriteAsync(batch, cancellation).ConfigureAwait(false);
            }
        }
        // A failure upstream arrives here as the channel's completion exception.
        await input.Completion.ConfigureAwait(false);
    }

    private static Channel<T> Pool<T>() where T : new()
    {
        var pool = Channel.CreateBounded<T>(new BoundedChannelOptions(BatchesInFlight + 2) { SingleReader = true, SingleWriter = false, FullMode = BoundedChannelFullMode.Wait });
        for (int i = 0; i < BatchesInFlight + 2; i++)
        {
            pool.Writer.TryWrite(new T());
        }
        return pool;
    }
}
