using Driftline.Core.Options;

namespace Driftline.Kafka.Options;

/// <summary>
/// Where the live worker reads and writes, bound from the <c>Kafka</c> section of the
/// configuration (and the <c>run</c> command's options, which win). With no
/// <see cref="Bootstrap"/> the worker runs on standard input and output instead.
/// </summary>
internal sealed class KafkaOptions
{
    /// <summary>Broker list, <c>host:port,host:port</c>. Default none: no Kafka, stdin/stdout.</summary>
    public string? Bootstrap { get; set; }

    /// <summary>Consumer group the workers share. Default <c>driftline</c>.</summary>
    public string Group { get; set; } = "driftline";

    /// <summary>Topic of events (and optionally of inline or label-only records). Default <c>events</c>.</summary>
    public string EventsTopic { get; set; } = "events";

    /// <summary>
    /// Separate topic of label-only records, or null when labels come on the events topic.
    /// It must be co-partitioned with the events topic: the same number of partitions and
    /// the label keyed like its event, so a label lands on the partition of its prediction.
    /// Default null.
    /// </summary>
    public string? LabelsTopic { get; set; }

    /// <summary>Topic the probabilities go to (keyed by model key). Default <c>predictions</c>.</summary>
    public string PredictionsTopic { get; set; } = "predictions";

    /// <summary>Topic alerts go to, or null to only log them. Default <c>alerts</c>.</summary>
    public string? AlertsTopic { get; set; } = "alerts";

    /// <summary>Topic rejected records go to, with reason and source position. Default <c>dead-letters</c>.</summary>
    public string DeadLetterTopic { get; set; } = "dead-letters";

    /// <summary>
    /// Topic the challengers' probabilities go to (<c>run --challenger</c>), keyed by model key
    /// like the predictions, with a <c>challenger</c> header naming the configuration. Default
    /// null: challengers score in the shadow and publish nothing but their evidence.
    /// </summary>
    public string? ChallengerTopic { get; set; }

    /// <summary>Folder of the per-partition checkpoints (model state plus offsets). Default <c>checkpoints</c>.</summary>
    public string CheckpointDir { get; set; } = "checkpoints";

    /// <summary>
    /// Compacted topic the checkpoints also go to, so a worker on another machine, without
    /// the checkpoint folder, can take a partition over. Default null: the folder only. When
    /// set, the topic must exist (create it with <c>cleanup.policy=compact</c>); each
    /// checkpoint is split into chunks of at most <see cref="Checkpoints.TopicCheckpointCodec.ChunkBytes"/>
    /// bytes, and a partition's offset is committed only when its checkpoint is on disk and
    /// acknowledged by the broker. On assignment the newer of the file and the topic's copy
    /// (by events offset, then labels offset; the file on a tie) is restored. Changing the
    /// topic's partition count later orphans the checkpoints already in it.
    /// </summary>
    public string? CheckpointTopic { get; set; }

    /// <summary>A partition is checkpointed (and its offset committed) after this many labels. Default 20,000.</summary>
    public int CheckpointEveryLabels { get; set; } = 20_000;

    /// <summary>... or after this long with any progress, whichever comes first. Default 10 seconds.</summary>
    public TimeSpan CheckpointEvery { get; set; } = TimeSpan.FromSeconds(10);

    /// <summary>
    /// Records held per partition waiting to be merged in time order with the other topic;
    /// beyond it the partition is paused (backpressure, not memory). Default 20,000.
    /// </summary>
    public int MaxBufferedPerPartition { get; set; } = 20_000;

    /// <summary>
    /// Longest a label later than every event seen on its partition waits, from when it was
    /// consumed, for the events side to catch up (its event may be written but not fetched
    /// yet). Labels whose events have been seen never wait. Default 2 seconds.
    /// </summary>
    public TimeSpan LabelHold { get; set; } = TimeSpan.FromSeconds(2);

    /// <summary>
    /// Any other librdkafka setting, passed through as given (security.protocol, sasl.*,
    /// ssl.*, timeouts). Values that can hold a secret (PEM contents, passwords, passphrases,
    /// client secrets, sasl.oauthbearer.config, sasl.jaas.config) are never logged; see <see cref="ClientSettings.IsSecret"/>.
    /// <c>enable.auto.commit</c> and <c>enable.auto.offset.store</c> are forced off.
    /// </summary>
    public Dictionary<string, string> Client { get; set; } = new(StringComparer.Ordinal);

    /// <summary>True when a broker is configured.</summary>
    public bool UsesKafka => !string.IsNullOrWhiteSpace(Bootstrap);

    /// <summary>Checks every option; returns the mistakes found.</summary>
    public IReadOnlyList<OptionError> Validate()
    {
        var errors = new List<OptionError>();
        if (!UsesKafka)
        {
            return errors;
        }
        Require(errors, "Kafka:Group (--group)", Group, "Name the consumer group the workers share, e.g. driftline");
        Require(errors, "Kafka:EventsTopic (--events-topic)", EventsTopic, "Name the topic the events arrive on");
        Require(errors, "Kafka:PredictionsTopic (--predictions-topic)", PredictionsTopic, "Name the topic the probabilities go to");
        Require(errors, "Kafka:DeadLetterTopic (--dead-letter-topic)", DeadLetterTopic, "Name the topic rejected records go to");
        Require(errors, "Kafka:CheckpointDir (--checkpoint-dir)", CheckpointDir, "Give a folder the worker may write its checkpoints to");
        if (LabelsTopic is not null && LabelsTopic.Length == 0)
        {
            LabelsTopic = null;
        }
        if (LabelsTopic == EventsTopic)
        {
            LabelsTopic = null;
        }
        if (string.IsNullOrWhiteSpace(CheckpointTopic))
        {
            CheckpointTopic = null;
        }
        else if (!IsTopicName(CheckpointTopic))
        {
            errors.Add(new("Kafka:CheckpointTopic", $"'{CheckpointTopic}' is not a valid topic name", "Use up to 249 letters, digits, '.', '_' or '-', e.g. driftline-checkpoints"));
        }
        else if (CheckpointTopic == EventsTopic || CheckpointTopic == LabelsTopic || CheckpointTopic == PredictionsTopic || CheckpointTopic == AlertsTopic || CheckpointTopic == DeadLetterTopic)
        {
            errors.Add(new("Kafka:CheckpointTopic", $"'{CheckpointTopic}' is also used for events, labels or outputs", "Give the checkpoints a compacted topic of their own, e.g. driftline-checkpoints"));
        }
        if (string.IsNullOrWhiteSpace(ChallengerTopic))
        {
            ChallengerTopic = null;
        }
        else if (!IsTopicName(ChallengerTopic))
        {
            errors.Add(new("Kafka:ChallengerTopic", $"'{ChallengerTopic}' is not a valid topic name", "Use up to 249 letters, digits, '.', '_' or '-', e.g. driftline-challengers"));
        }
        else if (ChallengerTopic == PredictionsTopic || ChallengerTopic == CheckpointTopic)
        {
            errors.Add(new("Kafka:ChallengerTopic", $"'{ChallengerTopic}' is also the predictions or checkpoint topic", "Give the challengers' probabilities a topic of their own, e.g. driftline-challengers"));
        }
        foreach (var topic in new[] { PredictionsTopic, AlertsTopic, DeadLetterTopic, ChallengerTopic })
        {
            if (topic == EventsTopic || (topic is not null && topic == LabelsTopic))
            {
                errors.Add(new("Kafka", $"output topic '{topic}' is also an input topic", "Write predictions, alerts and dead letters to topics the worker does not read"));
            }
        }
        if (CheckpointEveryLabels < 1)
        {
            errors.Add(new("Kafka:CheckpointEveryLabels", $"{CheckpointEveryLabels} is less than 1", "Use e.g. 20000"));
        }
        if (CheckpointEvery <= TimeSpan.Zero)
        {
            errors.Add(new("Kafka:CheckpointEvery", $"{CheckpointEvery} is not a positive duration", "Write it as hours:minutes:seconds, e.g. \"00:00:10\""));
        }
        if (LabelHold < TimeSpan.Zero || LabelHold > TimeSpan.FromMinutes(10))
        {
            errors.Add(new("Kafka:LabelHold", $"{LabelHold} is outside 0–10 minutes", "Use a few seconds, e.g. \"00:00:02\""));
        }
        if (MaxBufferedPerPartition < 100)
        {
            errors.Add(new("Kafka:MaxBufferedPerPartition", $"{MaxBufferedPerPartition} is less than 100", "Use e.g. 20000"));
        }
        foreach (var name in ClientSettings.Forced.Keys)
        {
            if (Client.TryGetValue(name, out var value) && value != ClientSettings.Forced[name])
            {
                errors.Add(new($"Kafka:Client:{name}", $"'{value}' would let the client commit offsets on its own", "Remove it: offsets follow checkpoints, so the worker commits them itself"));
            }
        }
        return errors;
    }

    private static bool IsTopicName(string name) =>
        name.Length <= 249 && name is not "." and not ".." && name.All(c => char.IsAsciiLetterOrDigit(c) || c is '.' or '_' or '-');

    private static void Require(List<OptionError> errors, string option, string? value, string fix)
    {
        if (string.IsNullOrWhiteSpace(value))
        {
            errors.Add(new(option, "is empty", fix));
        }
    }
}
