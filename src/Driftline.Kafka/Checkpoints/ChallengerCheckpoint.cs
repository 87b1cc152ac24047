using Driftline.Core.Challengers;
using Driftline.Core.Snapshots;

namespace Driftline.Kafka.Checkpoints;

/// <summary>A challenger's state in its partition's checkpoint, at the same offsets as the champion's.</summary>
internal sealed class ChallengerCheckpoint
{
    /// <summary>The challenger's configuration name (its file name without extension).</summary>
    public string Name { get; set; } = "";

    /// <summary>Its engine's whole state.</summary>
    public EngineSnapshot Snapshot { get; set; } = new();

    /// <summary>Its judge's evidence and the labels waiting to be paired.</summary>
    public ChallengerJudgeState? Judge { get; set; }
}
