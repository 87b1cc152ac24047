using System.Text;
using System.Threading.Channels;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Output;

namespace Driftline.Pipeline;

/// <summary>
/// source → parse + score/learn → write, three stages joined by bounded channels. Batches
/// circulate through pools, so memory is fixed whatever the input size, and a slow disk
/// slows the reader instead of filling memory. A failing stage completes its downstream
/// channel with the exception, which surfaces from <c>RunAsync</c>.
/// </summary>
internal sealed class ReplayPipeline
{
    private const int BatchesInFlight = 4;

    private readonly ScoringEngine _engine;
    private readonly BatchSink _sink;
    private readonly EventParser _parser = new();
    private readonly ParsedRecord _record = new();

    /// <summary>Creates a pipeline around a fresh engine for <paramref name="options"/>.</summary>
    public ReplayPipeline(DriftlineOptions options)
    {
        _sink = new BatchSink();
        _engine = new ScoringEngine(options, _sink);
    }

    /// <summary>The engine, for the summary and the saved model once the run is over.</summary>
    public ScoringEngine Engine => _engine;

    /// <summary>Records rejected (malformed, refused, or labels that graded nothing).</summary>
    public long DeadLetters { get; private set; }

    /// <summary>Lines read, blank ones included.</summary>
    public long Lines { get; private set; }

    /// <summary>Called on the scoring thread after each batch (progress reporting); may be null.</summary>
    public Action<ScoringEngine>? AfterBatch { get; init; }

    /// <summary>Runs the whole input through the engine into <paramref name="outputs"/>.</summary>
    public Task RunAsync(Stream input, ReplayOutputs outputs, CancellationToken cancellation)
    {
        ArgumentNullException.ThrowIfNull(outputs);
        return RunAsync(input, outputs.Write, cancellation);
    }

    /// <summary>Runs the whole input through the engine, handing each result batch to <paramref name="write"/> (on the writer stage).</summary>
    public async Task RunAsync(Stream input, Action<OutputBatch> write, CancellationToken cancellation)
    {
        var linePool = Pool<LineBatch>();
        var outputPool = Pool<OutputBatch>();
        var lines = Channel.CreateBounded<LineBatch>(new BoundedChannelOptions(BatchesInFlight) { SingleReader = true, SingleWriter = true, FullMode = BoundedChannelFullMode.Wait });
        var results = Channel.CreateBounded<OutputBatch>(new BoundedChannelOptions(BatchesInFlight) { SingleReader = true, SingleWriter = true, FullMode = BoundedChannelFullMode.Wait });

        // One stage failing stops the others, and its exception (not their cancellation) surfaces.
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(cancellation);
        var token = stop.Token;
        Task[] stages =
        [
            Stage(() => LineReader.RunAsync(input, linePool.Reader, lines.Writer, token), stop),
            Stage(() => ScoreAsync(lines.Reader, linePool.Writer, outputPool.Reader, results.Writer, token), stop),
            Stage(() => WriteAsync(results.Reader, outputPool.Writer, write, token), stop),
        ];
        try
        {
            await Task.WhenAll(stages).ConfigureAwait(false);
        }
        catch (Exception) when (stages.FirstOrDefault(t => t.IsFaulted && t.Exception!.InnerException is not OperationCanceledException) is { } failed)
        {
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(failed.Exception!.InnerException!);
        }
    }

    private static Task Stage(Func<Task> body, CancellationTokenSource stop) =>
        Task.Run(async () =>
        {
            try
            {
                await body().ConfigureAwait(false);
            }
            catch
            {
                await stop.CancelAsync().ConfigureAwait(false);
                throw;
            }
        });

    private async Task ScoreAsync(ChannelReader<LineBatch> input, ChannelWriter<LineBatch> linePool,
        ChannelReader<OutputBatch> outputPool, ChannelWriter<OutputBatch> output, CancellationToken cancellation)
    {
        try
        {
            while (await input.WaitToReadAsync(cancellation).ConfigureAwait(false))
            {
                while (input.TryRead(out var batch))
                {
                    var result = await outputPool.ReadAsync(cancellation).ConfigureAwait(false);
                    result.Clear();
                    _sink.Current = result;
                    for (int i = 0; i < batch.Count; i++)
                    {
                        ProcessLine(batch.Line(i), batch.FirstLine + i, result);
                    }
                    Lines += batch.Count;
                    await linePool.WriteAsync(batch, cancellation).ConfigureAwait(false);
                    AfterBatch?.Invoke(_engine);
                    await output.WriteAsync(result, cancellation).ConfigureAwait(false);
                }
            }
            output.Complete();
        }
        catch (Exception ex)
        {
            output.Complete(ex);
            throw;
        }
    }

    private void ProcessLine(ReadOnlySpan<byte> line, long lineNumber, OutputBatch result)
    {
        if (line.Trim(" \t"u8).IsEmpty)
        {
            return;
        }
        if (!_parser.TryParse(line, _record, out string? error))
        {
            Reject(lineNumber, error!, line, result);
            return;
        }
        switch (_engine.Process(_record))
        {
            case StepOutcome.Rejected:
                Reject(lineNumber, _engine.RejectReason!, line, result);
                break;
            case StepOutcome.UnknownLabel:
                Reject(lineNumber, "label for an id with no pending prediction (never scored, or dropped after Labels:MaxAge or Labels:MaxPending)", line, result);
                break;
            case StepOutcome.DuplicateLabel:
                Reject(lineNumber, "second label for a prediction that was already graded", line, result);
                break;
        }
    }

    private void Reject(long lineNumber, string reason, ReadOnlySpan<byte> line, OutputBatch result)
    {
        DeadLetters++;
        string raw = Encoding.UTF8.GetString(line.Length > DeadLetter.MaxRawChars * 4 ? line[..(DeadLetter.MaxRawChars * 4)] : line);
        if (raw.Length > DeadLetter.MaxRawChars)
        {
            raw = raw[..DeadLetter.MaxRawChars];
        }
        result.DeadLetters.Add(new DeadLetter(lineNumber, reason, raw));
    }

    private static async Task WriteAsync(ChannelReader<OutputBatch> input, ChannelWriter<OutputBatch> pool, Action<OutputBatch> write, CancellationToken cancellation)
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
