using Confluent.Kafka;

namespace Driftline.Kafka.Options;

/// <summary>
/// Turns <see cref="KafkaOptions"/> into librdkafka configurations: the pass-through
/// settings first, then what the worker's correctness depends on, forced.
/// </summary>
internal static class ClientSettings
{
    /// <summary>Settings the worker forces: offsets follow checkpoints, never a timer.</summary>
    public static readonly IReadOnlyDictionary<string, string> Forced = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["enable.auto.commit"] = "false",
        ["enable.auto.offset.store"] = "false",
    };

    /// <summary>The events consumer: in the group, partition ends reported (the time-order merge needs them).</summary>
    public static ConsumerConfig EventsConsumer(KafkaOptions options)
    {
        var config = new ConsumerConfig(Base(options))
        {
            GroupId = options.Group,
            EnablePartitionEof = true,
        };
        config.Set("auto.offset.reset", Get(options, "auto.offset.reset") ?? "earliest");
        GroupProtocol.Apply(config, options.Client);
        foreach (var (name, value) in Forced)
        {
            config.Set(name, value);
        }
        OnlyTimestamps(config);
        // The worker's broker contact (health, Worker:ExitAfterBrokerDown) comes from these statistics.
        int statistics = int.TryParse(Get(options, "statistics.interval.ms"), System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out int given) && given > 0
            ? Math.Min(given, Worker.BrokerContact.StatisticsIntervalMs)
            : Worker.BrokerContact.StatisticsIntervalMs;
        config.Set("statistics.interval.ms", statistics.ToString(System.Globalization.CultureInfo.InvariantCulture));
        return config;
    }

    /// <summary>librdkafka's <c>reconnect.backoff.max.ms</c> as set (default 10 s): the longest wait between two attempts at a broker.</summary>
    public static TimeSpan ReconnectBackoffMax(KafkaOptions options) =>
        int.TryParse(Get(options, "reconnect.backoff.max.ms"), System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out int ms) && ms > 0
            ? TimeSpan.FromMilliseconds(ms)
            : TimeSpan.FromSeconds(10);

    /// <summary>
    /// A record's key, value, partition, offset and timestamp are all the worker reads (the
    /// topic is known per consumer); not copying each record's topic name and headers into
    /// .NET saves the loop thread work on every record. Forced, since the merge needs the timestamps.
    /// </summary>
    private static void OnlyTimestamps(ConsumerConfig config) => config.Set("dotnet.consumer.consume.result.fields", "timestamp");

    /// <summary>
    /// The labels consumer: assigned by hand to the partitions the group gave the events
    /// consumer, so co-partitioned labels follow their events whatever the assignor. Its
    /// positions live in the checkpoints only, so it has no group.
    /// </summary>
    public static ConsumerConfig LabelsConsumer(KafkaOptions options)
    {
        var config = Unassigned(options, ".labels");
        OnlyTimestamps(config);
        return config;
    }

    /// <summary>
    /// The checkpoint topic's reader, at each assignment: assigned by hand, reading from the
    /// start, never committing. Tombstones and gaps left by compaction are expected.
    /// </summary>
    public static ConsumerConfig CheckpointReader(KafkaOptions options) => Unassigned(options, ".checkpoints");

    /// <summary>A consumer outside the group (assigned by hand, positions kept elsewhere), with partition ends reported.</summary>
    private static ConsumerConfig Unassigned(KafkaOptions options, string groupSuffix)
    {
        var settings = Base(options);
        // Group-membership settings mean nothing to a consumer outside the group and some are refused there.
        foreach (var name in settings.Keys.Where(k => k.StartsWith("group.", StringComparison.Ordinal) || k is "session.timeout.ms" or "heartbeat.interval.ms" or "partition.assignment.strategy").ToList())
        {
            settings.Remove(name);
        }
        var config = new ConsumerConfig(settings) { EnablePartitionEof = true };
        // librdkafka wants a group id even for a consumer that never joins or commits.
        config.Set("group.id", options.Group + groupSuffix);
        foreach (var (name, value) in Forced)
        {
            config.Set(name, value);
        }
        return config;
    }

    /// <summary>The producer of predictions, alerts and dead letters: idempotent, so retries do not duplicate.</summary>
    public static ProducerConfig Producer(KafkaOptions options)
    {
        var settings = Base(options);
        foreach (var name in settings.Keys.Where(IsConsumerOnly).ToList())
        {
            settings.Remove(name);
        }
        var config = new ProducerConfig(settings);
        config.Set("enable.idempotence", Get(options, "enable.idempotence") ?? "true");
        config.Set("linger.ms", Get(options, "linger.ms") ?? "5");
        // Only the outcome of each delivery is read; copying key and value back costs throughput.
        config.Set("dotnet.producer.delivery.report.fields", Get(options, "dotnet.producer.delivery.report.fields") ?? "status");
        return config;
    }

    /// <summary>Shown in place of a secret value.</summary>
    public const string Mask = "*****";

    /// <summary>
    /// The pass-through settings with secrets masked, for the start-up log: every setting
    /// <see cref="IsSecret"/> names, and any value holding a PEM block whatever its name.
    /// </summary>
    public static IReadOnlyDictionary<string, string> Masked(KafkaOptions options) =>
        options.Client.ToDictionary(kv => kv.Key, kv => IsSecret(kv.Key) || HoldsPem(kv.Value) ? Mask : kv.Value, StringComparer.Ordinal);

    /// <summary>
    /// True for librdkafka settings whose value can hold a secret and must never be logged
    /// (checked against every property in librdkafka's CONFIGURATION.md): PEM contents
    /// (<c>ssl.key.pem</c>, <c>ssl.certificate.pem</c>, <c>ssl.ca.pem</c>, <c>https.ca.pem</c>,
    /// <c>sasl.oauthbearer.assertion.private.key.pem</c>, the <c>ssl_key</c>,
    /// <c>ssl_certificate</c> and <c>ssl_ca</c> objects), passwords and passphrases
    /// (<c>sasl.password</c>, <c>ssl.key.password</c>, <c>ssl.keystore.password</c>,
    /// <c>…private.key.passphrase</c>), client secrets (<c>sasl.oauthbearer.client.secret</c>
    /// and its alias), <c>sasl.oauthbearer.config</c> (may carry a token or a secret) and the
    /// Java-style <c>sasl.jaas.config</c>. Certificates are public, but are masked with the rest
    /// of PEM contents: a long block says nothing an operator needs. Names are matched
    /// ignoring case, and by pattern, so a secret added by a later librdkafka under a usual name
    /// is masked too. Paths (<c>ssl.key.location</c>, <c>sasl.kerberos.keytab</c>) and user
    /// names stay visible.
    /// </summary>
    public static bool IsSecret(string name)
    {
        string n = name.Trim().ToLowerInvariant();
        return n.EndsWith(".pem", StringComparison.Ordinal)
            || n is "ssl_key" or "ssl_certificate" or "ssl_ca" or "sasl.oauthbearer.config"
            || n.Contains("password", StringComparison.Ordinal)
            || n.Contains("passphrase", StringComparison.Ordinal)
            || n.Contains("secret", StringComparison.Ordinal)
            || n.Contains("jaas", StringComparison.Ordinal)
            || n.Contains("private.key", StringComparison.Ordinal) && !n.EndsWith(".file", StringComparison.Ordinal);
    }

    private static bool HoldsPem(string? value) => value is not null && value.Contains("-----BEGIN", StringComparison.Ordinal);

    private static Dictionary<string, string> Base(KafkaOptions options)
    {
        var settings = new Dictionary<string, string>(options.Client, StringComparer.Ordinal)
        {
            ["bootstrap.servers"] = options.Bootstrap!,
        };
        settings.TryAdd("client.id", "driftline");
        return settings;
    }

    private static bool IsConsumerOnly(string name) =>
        name.StartsWith("group.", StringComparison.Ordinal) || name.StartsWith("fetch.", StringComparison.Ordinal)
        || name is "session.timeout.ms" or "heartbeat.interval.ms" or "auto.offset.reset" or "partition.assignment.strategy"
            or "max.poll.interval.ms" or "enable.partition.eof" or "isolation.level" or "enable.auto.commit" or "enable.auto.offset.store";

    private static string? Get(KafkaOptions options, string name) => options.Client.GetValueOrDefault(name);
}
