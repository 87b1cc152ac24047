using System.Text.Json.Serialization;

namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// The last record of a checkpoint on the checkpoint topic, keyed
/// <c>&lt;events-topic&gt;/&lt;partition&gt;/&lt;writer&gt;</c> and written only after every chunk it names
/// was acknowledged: it says which generation is complete, in which slot its chunks are, how
/// many there are and what the whole payload hashes to. Chunks that do not match it (an
/// older generation, a checkpoint cut short by a crash, leftovers of a longer one) are ignored.
/// </summary>
internal sealed class CheckpointManifest
{
    /// <summary>Marks the record as a Driftline checkpoint manifest.</summary>
    public string Format { get; set; } = FormatName;

    /// <summary>Version of this layout; readers refuse versions they do not know.</summary>
    public int FormatVersion { get; set; } = CurrentVersion;

    /// <summary>The events topic.</summary>
    public string EventsTopic { get; set; } = "";

    /// <summary>The events partition.</summary>
    public int Partition { get; set; }

    /// <summary>Counts the writer's checkpoints of the partition, from 1; each chunk carries it.</summary>
    public long Generation { get; set; }

    /// <summary>
    /// Which of the two chunk key sets (0 or 1) holds this generation. A writer always fills
    /// the slot its current manifest does not name, so compaction, which keeps the latest
    /// record per key, never loses the last complete checkpoint to one cut short.
    /// </summary>
    public int Slot { get; set; }

    /// <summary>Chunks of this generation, numbered from 0.</summary>
    public int Chunks { get; set; }

    /// <summary>Bytes of the whole payload (the checkpoint's JSON).</summary>
    public long Length { get; set; }

    /// <summary>XxHash64 of the whole payload, 16 hex digits.</summary>
    public string Hash { get; set; } = "";

    /// <summary>Next events offset the checkpoint reflects (compared with the file's on restore).</summary>
    public long EventsOffset { get; set; }

    /// <summary>Next labels offset the checkpoint reflects.</summary>
    public long LabelsOffset { get; set; }

    /// <summary>When the checkpoint was taken (UTC), for operators.</summary>
    public DateTime WrittenAt { get; set; }

    /// <summary>
    /// The writer whose keys hold it (see <see cref="TopicCheckpointCodec"/>), taken from its
    /// key and not written in the JSON, so the manifest's bytes are those of the layout before
    /// per-writer keys; <c>""</c> for a manifest of that layout.
    /// </summary>
    [JsonIgnore]
    public string Writer { get; set; } = "";

    /// <summary>Value of <see cref="Format"/>.</summary>
    public const string FormatName = "driftline-checkpoint-manifest";

    /// <summary>The layout this build writes.</summary>
    public const int CurrentVersion = 1;
}
