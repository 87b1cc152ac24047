using System.Text.Json;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Whether the worker is in touch with the cluster, from librdkafka's statistics of the events
/// consumer (emitted every <c>statistics.interval.ms</c> during Consume, on the loop thread):
/// a broker connection in state <c>UP</c> means the cluster is reachable, and the consumer
/// group's <c>join_state</c> <c>steady</c> (or the first assignment) means the group was joined.
/// </summary>
/// <remarks>
/// librdkafka has no "connected" callback, and an idle consumer at the end of its partitions
/// returns nothing from Consume whether the brokers are up or not, so the statistics are the
/// one signal that recovers by itself after an outage (field names: librdkafka's
/// STATISTICS.md, <c>brokers.*.state</c> and <c>cgrp.join_state</c>).
/// </remarks>
internal static class BrokerContact
{
    /// <summary>Statistics every second unless the operator asked for them more often: health and the broker-down limit are only as fresh as they are.</summary>
    public const int StatisticsIntervalMs = 1000;

    /// <summary>Reads one statistics document into <paramref name="stats"/>; returns true when a broker was up in it.</summary>
    public static bool Apply(string json, WorkerStats stats, DateTime now)
    {
        ArgumentNullException.ThrowIfNull(stats);
        bool up = false;
        bool steady = false;
        try
        {
            using var doc = JsonDocument.Parse(json);
            var root = doc.RootElement;
            if (root.TryGetProperty("brokers", out var brokers) && brokers.ValueKind == JsonValueKind.Object)
            {
                foreach (var broker in brokers.EnumerateObject())
                {
                    if (broker.Value.TryGetProperty("state", out var state) && state.ValueEquals("UP"u8))
                    {
                        up = true;
                        break;
                    }
                }
            }
            steady = root.TryGetProperty("cgrp", out var group) && group.TryGetProperty("join_state", out var join) && join.ValueEquals("steady"u8);
        }
        catch (JsonException)
        {
            return stats.BrokerReachable; // a document librdkafka cut short says nothing new
        }
        stats.BrokerReachable = up;
        if (up)
        {
            stats.LastBrokerContact = now;
            stats.GroupJoined |= steady;
        }
        return up;
    }
}
