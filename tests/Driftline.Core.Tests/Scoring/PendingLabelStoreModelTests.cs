using Driftline.Core.Events;
using Driftline.Core.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

/// <summary>
/// The pending store against a reference written from its definition with the BCL's
/// <see cref="List{T}"/> and <see cref="Dictionary{TKey, TValue}"/>: predictions in arrival order,
/// at most a capacity of them, the oldest leaving first or once older than the age limit, an id
/// naming its latest prediction. Any sequence of adds, joins, probes and expiries gives the same
/// answers, counts and contents (every field read back bit for bit). Few ids and a small
/// capacity, so ids are taken over, probe runs collide and wrap, and arena chunks are freed and
/// reused.
/// </summary>
public sealed class PendingLabelStoreModelTests
{
    private sealed record Data(string Id, long Time, int Model, double[] P, double[] PriorP, double Served, string? Segment, int[] Slots, double[] Values)
    {
        public bool Labelled { get; set; }
    }

    private static readonly double[] OddValues = [1.0, -1.0, 1.0, -1.0, 0.5, -0.0, double.NaN, double.PositiveInfinity, 1e-300, -2.75, BitConverter.Int64BitsToDouble(0x7FF0_0000_0000_0123)];

    [Theory]
    [InlineData(1, 5, 2)]
    [InlineData(2, 8, 1)]
    [InlineData(3, 8, 3)]
    [InlineData(4, 300, 3)]
    public void Operations_AnySequence_AgreeWithTheReference(int seed, int capacity, int classes)
    {
        var random = new Random(seed);
        var maxAge = TimeSpan.FromMinutes(30);
        var store = new PendingLabelStore(capacity, maxAge);
        var order = new List<Data>();
        var byId = new Dictionary<string, Data>(StringComparer.Ordinal);
        long expired = 0;
        long t0 = new DateTime(2026, 3, 1, 0, 0, 0, DateTimeKind.Utc).Ticks;
        long now = t0;
        int distinct = capacity * 2 + 3;

        void EvictOldest()
        {
            var e = order[0];
            order.RemoveAt(0);
            expired += e.Labelled ? 0 : 1;
            if (byId.TryGetValue(e.Id, out var owner) && ReferenceEquals(owner, e))
            {
                byId.Remove(e.Id);
            }
        }

        for (int step = 0; step < 30_000; step++)
        {
            string id = Id(random, distinct);
            switch (random.Next(10))
            {
                case < 5:
                    var d = Make(random, id, now, t0, classes == 1 || random.Next(2) == 0 ? 1 : classes);
                    if (order.Count == capacity)
                    {
                        EvictOldest();
                    }
                    if (byId.TryGetValue(id, out var earlier) && !earlier.Labelled)
                    {
                        expired++;
                        earlier.Labelled = true;
                    }
                    byId[id] = d;
                    order.Add(d);
                    store.Add(d.Id, d.Time, d.Model, d.P, d.PriorP, d.P.Length == 1 ? [d.Served] : [], d.Segment, d.Slots, d.Values);
                    break;
                case < 8:
                    var expected = !byId.TryGetValue(id, out var held) ? LabelJoin.UnknownId : held.Labelled ? LabelJoin.Duplicate : LabelJoin.Joined;
                    Assert.Equal(expected, store.TryJoin(id, out var joined));
                    if (expected == LabelJoin.Joined)
                    {
                        held!.Labelled = true;
                        AssertSame(held, joined!, withId: false);
                    }
                    break;
                case 8:
                    Assert.Equal(byId.TryGetValue(id, out var w) && !w.Labelled, store.IsWaiting(id));
                    break;
                default:
                    now += TimeSpan.FromMinutes(random.Next(0, 12)).Ticks;
                    while (order.Count > 0 && order[0].Time != ParsedRecord.NoTime && now - order[0].Time > maxAge.Ticks)
                    {
                        EvictOldest();
                    }
                    store.ExpireBefore(now);
                    break;
            }
            Assert.Equal((order.Count, order.Count(e => !e.Labelled), expired), (store.Count, store.Waiting, store.Expired));
            if (step % 997 == 0)
            {
                var entries = store.Entries().ToList();
                Assert.Equal(order.Count, entries.Count);
                for (int i = 0; i < entries.Count; i++)
                {
                    AssertSame(order[i], entries[i], withId: true);
                }
            }
        }
    }

    private static string Id(Random random, int distinct)
    {
        int n = random.Next(distinct);
        // Now and then an id that is not valid UTF-16, or one long enough to need a two-byte length.
        return n % 17 == 3 ? $"o-{n}\uDC00" : n % 13 == 5 ? new string('é', 70) + n : $"o-{n}";
    }

    private static Data Make(Random random, string id, long now, long t0, int classes)
    {
        long time = random.Next(6) == 0 ? ParsedRecord.NoTime : now - TimeSpan.FromMinutes(random.Next(3)).Ticks;
        int model = random.Next(4) == 0 ? random.Next(1, 300) : 0;
        double[] p = Enumerable.Range(0, classes).Select(_ => random.NextDouble()).ToArray();
        double[] prior = Enumerable.Range(0, classes).Select(_ => random.NextDouble()).ToArray();
        double served = random.Next(3) == 0 ? random.NextDouble() : double.NaN;
        string? segment = random.Next(3) switch { 0 => null, 1 => "city-" + random.Next(5), _ => "\uD83C\uDF55x\uD800" };
        int count = random.Next(4) == 0 ? 0 : random.Next(1, 25);
        int bits = random.Next(4) switch { 0 => 4, 1 => 18, 2 => 28, _ => 32 };
        int[] slots = Enumerable.Range(0, count).Select(_ => bits == 32 ? random.Next(int.MinValue, int.MaxValue) : random.Next(1 << bits)).ToArray();
        double[] values = Enumerable.Range(0, count).Select(_ => random.Next(3) == 0 ? random.NextDouble() * 10 - 5 : OddValues[random.Next(OddValues.Length)]).ToArray();
        _ = t0;
        return new Data(id, time, model, p, prior, served, segment, slots, values);
    }

    private static void AssertSame(Data expected, PendingPrediction actual, bool withId)
    {
        if (withId)
        {
            Assert.Equal(expected.Id, actual.Id);
        }
        Assert.Equal(expected.Labelled, actual.Labelled);
        Assert.Equal((expected.Model, expected.Time, expected.Segment), (actual.Model, actual.TimeTicks, actual.Segment));
        Assert.Equal(Bits(expected.P.Length == 1 ? expected.Served : double.NaN), Bits(actual.Served));
        if (expected.P.Length == 1)
        {
            Assert.Equal((Bits(expected.P[0]), Bits(expected.PriorP[0])), (Bits(actual.P), Bits(actual.PriorP)));
            Assert.Equal(0, actual.ClassP.Length);
        }
        else
        {
            Assert.Equal(expected.P.Select(Bits), actual.ClassP.ToArray().Select(Bits));
            Assert.Equal(expected.PriorP.Select(Bits), actual.ClassPriorP.ToArray().Select(Bits));
            Assert.True(double.IsNaN(actual.P) && double.IsNaN(actual.PriorP));
        }
        Assert.Equal(expected.Slots, actual.Slots.ToArray());
        Assert.Equal(expected.Values.Select(Bits), actual.Values.ToArray().Select(Bits));
    }

    private static long Bits(double v) => BitConverter.DoubleToInt64Bits(v);
}
