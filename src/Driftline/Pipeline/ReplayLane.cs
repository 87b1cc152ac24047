using Driftline.Core.Options;
using Driftline.Core.Scoring;

namespace Driftline.Pipeline;

/// <summary>
/// One configuration inside a replay: its own engine and sink over the events every lane
/// shares, so several configurations are compared on exactly the same parse.
/// </summary>
internal sealed class ReplayLane
{
    /// <summary>Creates a lane with a fresh engine for <paramref name="options"/>.</summary>
    /// <param name="options">Validated options.</param>
    /// <param name="decorate">Wraps the lane's batch sink (e.g. to record report data); null keeps it as is.</param>
    public ReplayLane(DriftlineOptions options, Func<IScoringSink, IScoringSink>? decorate = null)
    {
        Sink = new BatchSink();
        Output = decorate?.Invoke(Sink) ?? Sink;
        Engine = new ScoringEngine(options, Output);
    }

    /// <summary>What the lane's engine writes into (the batch sink, decorated); a promoted challenger's engine is restored behind it.</summary>
    public IScoringSink Output { get; }

    /// <summary>Collects the engine's results into the current output batch.</summary>
    public BatchSink Sink { get; }

    /// <summary>The lane's engine; replaced when a challenger is promoted into the lane (<c>Challengers:AutoPromote</c>).</summary>
    public ScoringEngine Engine { get; set; }

    /// <summary>Records rejected in this lane (malformed for every lane, or refused by this engine).</summary>
    public long DeadLetters { get; set; }
}
