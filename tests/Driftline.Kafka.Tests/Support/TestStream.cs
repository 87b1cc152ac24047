using System.Globalization;

namespace Driftline.Kafka.Tests.Support;

/// <summary>One record to produce: topic side, message key, JSON value, message timestamp.</summary>
internal sealed record TestRecord(bool IsLabel, string Key, string Value, long TimestampMs, string Id);

/// <summary>
/// A small keyed stream with a known outcome model: about half the labels come inline,
/// the rest as label-only records on the labels topic, a few seconds of message time later.
/// Deterministic for a seed.
/// </summary>
internal static class TestStream
{
    public const long StartMs = 1_767_225_600_000; // 2026-01-01T00:00:00Z

    public static List<TestRecord> Generate(int events, int keys, int seed = 11, double lateShare = 0.5)
    {
        var random = new Random(seed);
        var records = new List<TestRecord>(events * 2);
        var zones = new[] { "north", "south", "east", "west" };
        for (int i = 0; i < events; i++)
        {
            long t = StartMs + i * 10L;
            string id = $"e-{i:D6}";
            string key = $"k{i % keys}";
            string zone = zones[random.Next(zones.Length)];
            double distance = Math.Round(random.NextDouble() * 10, 3);
            bool rain = random.NextDouble() < 0.3;
            double z = -1 + 0.25 * distance + (rain ? 0.8 : 0) + (zone == "north" ? 0.5 : 0);
            int y = random.NextDouble() < 1 / (1 + Math.Exp(-z)) ? 1 : 0;
            bool late = random.NextDouble() < lateShare;
            string time = DateTimeOffset.FromUnixTimeMilliseconds(t).UtcDateTime.ToString("yyyy-MM-ddTHH:mm:ss.fffZ", CultureInfo.InvariantCulture);
            string features = string.Create(CultureInfo.InvariantCulture, $"{{\"zone\":\"{zone}\",\"distance_km\":{distance},\"raining\":{(rain ? "true" : "false")}}}");
            string label = late ? "" : $",\"label\":{y}";
            records.Add(new TestRecord(false, key, $"{{\"id\":\"{id}\",\"time\":\"{time}\",\"key\":\"{key}\",\"features\":{features}{label}}}", t, id));
            if (late)
            {
                long lt = t + 2_000 + random.Next(3_000);
                string ltime = DateTimeOffset.FromUnixTimeMilliseconds(lt).UtcDateTime.ToString("yyyy-MM-ddTHH:mm:ss.fffZ", CultureInfo.InvariantCulture);
                records.Add(new TestRecord(true, key, $"{{\"id\":\"{id}\",\"label\":{y},\"time\":\"{ltime}\"}}", lt, id));
            }
        }
        return records;
    }
}
