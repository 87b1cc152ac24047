using Driftline.Core.Challengers;
using Driftline.Core.Scoring;

namespace Driftline.Kafka.Worker;

/// <summary>
/// One challenger on one partition: its own engine over the partition's records (the same
/// parse as the champion's), its sink, and the judge pairing its graded labels with the champion's.
/// </summary>
internal sealed class ChallengerLane(string name, ScoringEngine engine, ChallengerSink sink, ChallengerJudge judge)
{
    /// <summary>The challenger's configuration name.</summary>
    public string Name { get; } = name;

    /// <summary>Its engine.</summary>
    public ScoringEngine Engine { get; } = engine;

    /// <summary>Its outputs.</summary>
    public ChallengerSink Sink { get; } = sink;

    /// <summary>Its test against the partition's champion.</summary>
    public ChallengerJudge Judge { get; } = judge;
}
