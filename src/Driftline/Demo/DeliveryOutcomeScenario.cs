using System.Text.Json;

namespace Driftline.Demo;

/// <summary>
/// The invented multiclass demo: how each food delivery ends, one of
/// <see cref="Classes"/>, drawn from a known softmax model of the zone, distance, basket size,
/// hour and weather. About a third of the outcomes arrive later as label-only records and a few
/// never arrive. Partway through a storm makes late deliveries far more likely (+1.2 on the
/// margin of "late", +0.6 on "failed"), so those classes are under-predicted until the model
/// relearns; the storm passes later. Every number is made up.
/// </summary>
internal sealed class DeliveryOutcomeScenario
{
    /// <summary>The outcomes, in the order a configuration lists them (<c>config/delivery-outcomes.json</c>).</summary>
    public static readonly string[] Classes = ["on-time", "late", "failed", "cancelled"];

    private static readonly string[] Zones = ["riverside", "old-town", "harbour", "hillside", "university", "market"];
    // Per class (the first, on-time, is the base with all effects zero).
    private static readonly double[] Intercept = [0, -1.4, -3.4, -3.0];
    private static readonly double[] Distance = [0, 0.30, 0.15, 0.05];
    private static readonly double[] Items = [0, 0.06, 0.04, -0.05];
    private static readonly double[] Raining = [0, 0.6, 0.3, 0.2];
    private static readonly double[] Rush = [0, 0.5, 0.1, 0.25];
    private static readonly double[][] ZoneEffect =
    [
        [0, 0, 0, 0], [0, 0.3, 0.1, 0], [0, -0.2, 0.4, 0.1], [0, 0.5, 0.2, -0.1], [0, -0.3, -0.2, 0.3], [0, 0.2, 0, 0.2],
    ];
    private static readonly double[] Storm = [0, 1.2, 0.6, 0];

    private readonly Random _random;

    /// <summary>Creates the scenario with a fixed <paramref name="seed"/> (same seed, same file).</summary>
    public DeliveryOutcomeScenario(int seed) => _random = new Random(seed);

    /// <summary>Orders in the stream. Default 60,000.</summary>
    public int Orders { get; init; } = 60_000;

    /// <summary>Fraction of the stream at which the storm starts. Default 0.55.</summary>
    public double StormStarts { get; init; } = 0.55;

    /// <summary>Fraction of the stream at which the storm ends. Default 0.75.</summary>
    public double StormEnds { get; init; } = 0.75;

    /// <summary>Writes the stream, one JSON object per line, in time order.</summary>
    public void Write(Stream output)
    {
        var time = new DateTime(2026, 3, 2, 10, 0, 0, DateTimeKind.Utc);
        var late = new PriorityQueue<(string Id, int Label, DateTime Time), DateTime>();
        using var json = new Utf8JsonWriter(output, new JsonWriterOptions { SkipValidation = true });
        int stormFrom = (int)(Orders * StormStarts), stormTo = (int)(Orders * StormEnds);
        Span<double> p = stackalloc double[Classes.Length];
        for (int n = 0; n < Orders; n++)
        {
            time = time.AddSeconds(-Math.Log(1 - _random.NextDouble()) * 2.5);
            while (late.TryPeek(out var due, out var at) && at <= time)
            {
                late.Dequeue();
                WriteLabel(json, output, due);
            }
            bool storm = n >= stormFrom && n < stormTo;
            string id = $"d-{100_000 + n}";
            int zone = _random.Next(Zones.Length);
            double distance = Math.Round(Math.Exp(1.0 + 0.55 * Normal()), 2);
            int items = 1 + (int)Math.Min(14, -Math.Log(1 - _random.NextDouble()) * 3.5);
            bool raining = storm ? _random.NextDouble() < 0.9 : _random.NextDouble() < 0.15;
            bool rush = time.Hour is 12 or 13 or 18 or 19 or 20;
            double sum = 0;
            for (int k = 0; k < p.Length; k++)
            {
                double m = Intercept[k] + Distance[k] * (distance - 3) + Items[k] * (items - 4) + ZoneEffect[zone][k]
                    + (raining ? Raining[k] : 0) + (rush ? Rush[k] : 0) + (storm ? Storm[k] : 0);
                p[k] = Math.Exp(m);
                sum += p[k];
            }
            double u = _random.NextDouble() * sum;
            int label = 0;
            for (double c = p[0]; label < p.Length - 1 && u >= c; c += p[++label])
            {
            }

            double fate = _random.NextDouble();
            json.Reset(output);
            json.WriteStartObject();
            json.WriteString("id", id);
            json.WriteString("time", time);
            json.WriteStartObject("features");
            json.WriteString("zone", Zones[zone]);
            json.WriteNumber("distance_km", distance);
            json.WriteNumber("items", items);
            json.WriteString("hour", time.Hour.ToString("00", System.Globalization.CultureInfo.InvariantCulture));
            json.WriteBoolean("raining", raining);
            json.WriteEndObject();
            if (fate >= 0.35)
            {
                json.WriteString("label", Classes[label]);
            }
            json.WriteEndObject();
            json.Flush();
            output.WriteByte((byte)'\n');
            if (fate < 0.33)
            {
                // The outcome is known 20–50 minutes later; 2% of outcomes never arrive.
                var due = time.AddMinutes(20 + 30 * _random.NextDouble());
                late.Enqueue((id, label, due), due);
            }
        }
        while (late.TryDequeue(out var due, out _))
        {
            WriteLabel(json, output, due);
        }
    }

    private static void WriteLabel(Utf8JsonWriter json, Stream output, (string Id, int Label, DateTime Time) due)
    {
        json.Reset(output);
        json.WriteStartObject();
        json.WriteString("id", due.Id);
        json.WriteString("label", Classes[due.Label]);
        json.WriteString("time", due.Time);
        json.WriteEndObject();
        json.Flush();
        output.WriteByte((byte)'\n');
    }

    // Box–Muller: a standard normal from two uniforms.
    private double Normal() => Math.Sqrt(-2 * Math.Log(1 - _random.NextDouble())) * Math.Cos(2 * Math.PI * _random.NextDouble());
}
