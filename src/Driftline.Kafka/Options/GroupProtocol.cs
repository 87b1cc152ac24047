using Confluent.Kafka;

namespace Driftline.Kafka.Options;

/// <summary>
/// Which consumer group protocol the events consumer speaks, from
/// <c>Kafka:Client:group.protocol</c>. Default <c>classic</c> with the
/// <c>cooperative-sticky</c> assignor (<c>Kafka:Client:partition.assignment.strategy</c> wins
/// when given).
/// </summary>
/// <remarks>
/// <para>Why classic by default: every broker since Kafka 2.4 runs it, and with the cooperative
/// assignor a member joining or leaving moves only the partitions that change owner; the others
/// keep scoring through the rebalance. librdkafka's own default assignor list (range,
/// roundrobin) is eager: every member gives up every partition at every join, which
/// checkpoints and reloads all of them and pauses the whole group.</para>
/// <para><c>consumer</c> (KIP-848, the broker assigns) needs a Kafka 4.0 broker or later with
/// the new group coordinator. It takes no client assignor and no client session timeout (the
/// broker's <c>group.consumer.session.timeout.ms</c>, 45 s by default, decides when a dead
/// member's partitions move); those client settings pass through as given and do not apply
/// there.</para>
/// </remarks>
internal static class GroupProtocol
{
    /// <summary>The protocol used when <c>group.protocol</c> is not given.</summary>
    public const string Default = "classic";

    /// <summary>The assignor used with the classic protocol when none is given.</summary>
    public const string DefaultAssignor = "cooperative-sticky";

    /// <summary>Sets the protocol (and, for classic, the assignor) on the events consumer's configuration.</summary>
    public static void Apply(ConsumerConfig config, IReadOnlyDictionary<string, string> client)
    {
        string protocol = client.GetValueOrDefault("group.protocol") ?? Default;
        config.Set("group.protocol", protocol);
        if (protocol == "classic")
        {
            config.Set("partition.assignment.strategy", client.GetValueOrDefault("partition.assignment.strategy") ?? DefaultAssignor);
        }
    }
}
