using System.Text.Json;

namespace Driftline.Demo;

/// <summary>
/// The invented demo: a food-delivery service predicting which orders will arrive late.
/// Orders carry the zone, courier, distance, basket size and value, tip share, hour and
/// weather; the outcome follows a known logistic model. About a third of the labels arrive
/// later as label-only records, a few never arrive, and a handful of records are malformed
/// on purpose to show the dead-letter path. Partway through a storm sets in: rain almost
/// everywhere and slower roads, so lateness jumps and the model's probabilities stop being
/// calibrated until it relearns; the storm passes later. Every number is made up.
/// </summary>
internal sealed class DemoScenario
{
    private static readonly string[] Zones = ["riverside", "old-town", "harbour", "hillside", "university", "market", "airport-road", "suburbs"];
    private static readonly double[] ZoneEffect = [0.0, 0.35, -0.2, 0.5, -0.3, 0.2, 0.6, -0.1];
    private static readonly string[] Tags = ["dessert", "large-order", "fragile", "drinks", "contactless"];

    private readonly Random _random;
    private readonly double[] _courierEffect;

    /// <summary>Creates the scenario with a fixed <paramref name="seed"/> (same seed, same file).</summary>
    public DemoScenario(int seed)
    {
        _random = new Random(seed);
        _courierEffect = Enumerable.Range(0, 120).Select(_ => Normal() * 0.45).ToArray();
    }

    /// <summary>Orders in the stream. Default 60,000.</summary>
    public int Orders { get; init; } = 60_000;

    /// <summary>Fraction of the stream at which the storm starts. Default 0.55.</summary>
    public double StormStarts { get; init; } = 0.55;

    /// <summary>Fraction of the stream at which the storm ends. Default 0.75.</summary>
    public double StormEnds { get; init; } = 0.75;

    /// <summary>Share of labels that arrive late, as label-only records. Default 0.33.</summary>
    public double LateShare { get; init; } = 0.33;

    /// <summary>Share of orders whose label never arrives. Default 0.02.</summary>
    public double MissingShare { get; init; } = 0.02;

    /// <summary>Writes the stream, one JSON object per line, in time order.</summary>
    public void Write(Stream output)
    {
        var start = new DateTime(2026, 3, 2, 10, 0, 0, DateTimeKind.Utc);
        var time = start;
        var late = new PriorityQueue<(string Id, int Label, DateTime Time), DateTime>();
        using var json = new Utf8JsonWriter(output, new JsonWriterOptions { SkipValidation = true });
        int stormFrom = (int)(Orders * StormStarts), stormTo = (int)(Orders * StormEnds);
        int[] malformedAt = [1_234, 9_876, 20_202, 33_333, 47_000, 58_765];

        for (int n = 0; n < Orders; n++)
        {
            time = time.AddSeconds(-Math.Log(1 - _random.NextDouble()) * 2.5);
            while (late.TryPeek(out var due, out var at) && at <= time)
            {
                late.Dequeue();
                WriteLabel(json, output, due);
            }
            int malformed = Array.IndexOf(malformedAt, n);
            if (malformed >= 0)
            {
                json.Flush();
                output.Write(Malformed(malformed));
                output.WriteByte((byte)'\n');
            }

            bool storm = n >= stormFrom && n < stormTo;
            string id = $"o-{100_000 + n}";
            int zone = _random.Next(Zones.Length);
            int courier = _random.Next(_courierEffect.Length);
            double distance = Math.Round(Math.Exp(1.0 + 0.55 * Normal()), 2);
            int items = 1 + (int)Math.Min(14, -Math.Log(1 - _random.NextDouble()) * 3.5);
            double basket = Math.Round(600 + items * 850 * (0.6 + 0.8 * _random.NextDouble()));
            double tipShare = Math.Round(Math.Max(0, 0.012 + 0.01 * Normal()), 4);
            int hour = time.Hour;
            bool raining = storm ? _random.NextDouble() < 0.9 : _random.NextDouble() < 0.15;
            var tags = Tags.Where(_ => _random.NextDouble() < 0.18).ToList();
            if (items >= 8 && !tags.Contains("large-order"))
            {
                tags.Add("large-order");
            }

            bool rush = hour is 12 or 13 or 18 or 19 or 20;
            double logOdds = -1.7
                + 0.28 * (distance - 3) * (storm ? 2.0 : 1.0)
                + 0.07 * (items - 4)
                + 0.00005 * (basket - 4000)
                - 18 * (tipShare - 0.012)
                + ZoneEffect[zone]
                + _courierEffect[courier]
                + (raining ? 0.5 : 0)
                + (rush ? 0.45 : 0)
                + (tags.Contains("fragile") ? 0.25 : 0)
                + (storm ? 1.3 : 0);
            int label = _random.NextDouble() < 1 / (1 + Math.Exp(-logOdds)) ? 1 : 0;

            double fate = _random.NextDouble();
            bool inline = fate >= LateShare + MissingShare;
            json.Reset(output);
            json.WriteStartObject();
            json.WriteString("id", id);
            json.WriteString("time", time);
            json.WriteStartObject("features");
            json.WriteString("zone", Zones[zone]);
            json.WriteString("courier", $"c-{courier:000}");
            json.WriteNumber("distance_km", distance);
            json.WriteNumber("items", items);
            json.WriteNumber("basket_value", basket);
            json.WriteNumber("tip_share", tipShare);
            json.WriteString("hour", hour.ToString("00", System.Globalization.CultureInfo.InvariantCulture));
            json.WriteBoolean("raining", raining);
            json.WriteStartArray("tags");
            foreach (var tag in tags)
            {
                json.WriteStringValue(tag);
            }
            json.WriteEndArray();
            json.WriteEndObject();
            if (inline)
            {
                json.WriteNumber("label", label);
            }
            json.WriteEndObject();
            json.Flush();
            output.WriteByte((byte)'\n');

            if (fate < LateShare)
            {
                // The order is delivered (or not) 20–50 minutes later: that is when we learn.
                var due = time.AddMinutes(20 + 30 * _random.NextDouble());
                late.Enqueue((id, label, due), due);
            }
        }
        while (late.TryDequeue(out var due, out _))
        {
            WriteLabel(json, output, due);
        }
    }

    // A label-only record: the outcome of an earlier order, as it becomes known.
    private static void WriteLabel(Utf8JsonWriter json, Stream output, (string Id, int Label, DateTime Time) due)
    {
        json.Reset(output);
        json.WriteStartObject();
        json.WriteString("id", due.Id);
        json.WriteNumber("label", due.Label);
        json.WriteString("time", due.Time);
        json.WriteEndObject();
        json.Flush();
        output.WriteByte((byte)'\n');
    }

    private static byte[] Malformed(int which) => which switch
    {
        0 => """{"id":"o-broken-1","time":"2026-03-02T11:00:00Z","features":{"zone":"harbour","distance_km":2.1"""u8.ToArray(),
        1 => """{"id":"o-broken-2","features":{"zone":"market"},"label":2}"""u8.ToArray(),
        2 => """{"features":{"zone":"suburbs","items":3}}"""u8.ToArray(),
        3 => """{"id":"o-broken-4","features":["zone","hillside"]}"""u8.ToArray(),
        4 => """{"id":"o-broken-5","features":{"zone":"riverside","courier":{"name":"c-001"}}}"""u8.ToArray(),
        _ => "order o-broken-6 was late\t(free text pasted into the stream)"u8.ToArray(),
    };

    // Box–Muller: a standard normal from two uniforms.
    private double Normal() => Math.Sqrt(-2 * Math.Log(1 - _random.NextDouble())) * Math.Cos(2 * Math.PI * _random.NextDouble());
}
