using Driftline.Core.Snapshots;

namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// One partition's state and the input positions it reflects: the engine after every
/// record before <see cref="EventsOffset"/> on the events partition and before
/// <see cref="LabelsOffset"/> on the labels partition, and nothing after. Restoring it and
/// seeking both partitions there continues as if the worker had never stopped.
/// </summary>
internal sealed class PartitionCheckpoint
{
    /// <summary>Marks the file as a Driftline partition checkpoint.</summary>
    public string Format { get; set; } = FormatName;

    /// <summary>Version of this layout; readers refuse versions they do not know.</summary>
    public int FormatVersion { get; set; } = CurrentVersion;

    /// <summary>The events topic.</summary>
    public string EventsTopic { get; set; } = "";

    /// <summary>The partition, of the events topic and of the co-partitioned labels topic.</summary>
    public int Partition { get; set; }

    /// <summary>Next events offset to process.</summary>
    public long EventsOffset { get; set; }

    /// <summary>The labels topic, or null when labels come on the events topic.</summary>
    public string? LabelsTopic { get; set; }

    /// <summary>Next labels offset to process (ignored without a labels topic).</summary>
    public long LabelsOffset { get; set; }

    /// <summary>When it was written (UTC), for the checkpoint-age metric and operators.</summary>
    public DateTime WrittenAt { get; set; }

    /// <summary>The engine's whole state.</summary>
    public EngineSnapshot Snapshot { get; set; } = new();

    /// <summary>
    /// The challengers' engines and evidence at the same offsets (<c>run --challenger</c>), or
    /// null when none ran. A challenger is restored by name; one no longer configured is dropped.
    /// </summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public List<ChallengerCheckpoint>? Challengers { get; set; }

    /// <summary>
    /// Challengers that replaced the champion on this partition (<c>Challengers:AutoPromote</c>),
    /// in order, or null when none did. <see cref="Snapshot"/> is then the promoted engine, and a
    /// challenger named here is not started again as a challenger after a restart.
    /// </summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public List<Driftline.Core.Challengers.ChallengerPromotion>? Promotions { get; set; }

    /// <summary>Value of <see cref="Format"/>.</summary>
    public const string FormatName = "driftline-partition-checkpoint";

    /// <summary>The layout this build writes.</summary>
    public const int CurrentVersion = 1;
}
