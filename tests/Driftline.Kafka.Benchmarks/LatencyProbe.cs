using System.Buffers.Text;
using System.Diagnostics;
using System.Globalization;
using System.Text;
using Confluent.Kafka;
using Driftline.Kafka.Worker;

namespace Driftline.Kafka.Benchmarks;

/// <summary>
/// Timestamps (<see cref="Stopwatch.GetTimestamp"/>) of each timed event at every stage of its
/// path: produced by the benchmark, acknowledged to it, consumed by the worker's loop, taken by
/// its engine, done there, its prediction acknowledged to the worker, read back. Events are
/// told by their id (the index in <c>sent</c>); a prediction's acknowledgement is found by its
/// partition and offset, which the reader sees too.
/// </summary>
internal sealed class LatencyProbe(int events) : IRecordProbe
{
    private const int MaxPartitions = 64;
    private const int OffsetsPerPartition = 1 << 19;

    private readonly long[]?[] _delivered = new long[]?[MaxPartitions];

    public long[] Sent { get; } = new long[events + 1];

    public long[] Acked { get; } = new long[events + 1];

    public long[] Consumed { get; } = new long[events + 1];

    public long[] Draining { get; } = new long[events + 1];

    public long[] Drained { get; } = new long[events + 1];

    /// <summary>When the worker heard its prediction was stored, looked up once the reader has it.</summary>
    public long[] Delivered { get; } = new long[events + 1];

    public long[] Read { get; } = new long[events + 1];

    void IRecordProbe.Consumed(bool fromLabels, int partition, long offset, ReadOnlySpan<byte> value) => Stamp(Consumed, value);

    void IRecordProbe.Draining(bool fromLabels, int partition, in BufferedRecord record) => Stamp(Draining, record.Value);

    void IRecordProbe.Drained(bool fromLabels, int partition, in BufferedRecord record) => Stamp(Drained, record.Value);

    void IRecordProbe.Delivered(DeliveryReport<byte[]?, byte[]> report)
    {
        int partition = report.Partition.Value;
        long offset = report.Offset.Value;
        if (partition < 0 || partition >= MaxPartitions || offset < 0 || offset >= OffsetsPerPartition)
        {
            return;
        }
        var row = Volatile.Read(ref _delivered[partition]);
        if (row is null)
        {
            Interlocked.CompareExchange(ref _delivered[partition], new long[OffsetsPerPartition], null);
            row = _delivered[partition]!;
        }
        row[offset] = Stopwatch.GetTimestamp();
    }

    /// <summary>The reader read the prediction of <paramref name="index"/> at <paramref name="partition"/>/<paramref name="offset"/>.</summary>
    public void ReadBack(int index, int partition, long offset, long at)
    {
        Read[index] = at;
        if (partition >= 0 && partition < MaxPartitions && offset >= 0 && offset < OffsetsPerPartition && Volatile.Read(ref _delivered[partition]) is { } row)
        {
            Delivered[index] = row[offset];
        }
    }

    /// <summary>The event index of an event record (<c>{"id":"N","key":...</c>), or -1 for a label-only record or another stream's.</summary>
    public static int EventIndex(ReadOnlySpan<byte> value)
    {
        if (!value.StartsWith("{\"id\":\""u8))
        {
            return -1;
        }
        var rest = value[7..];
        if (!Utf8Parser.TryParse(rest, out int index, out int used) || !rest[used..].StartsWith("\",\"key\""u8))
        {
            return -1;
        }
        return index;
    }

    private void Stamp(long[] at, ReadOnlySpan<byte> value)
    {
        int index = EventIndex(value);
        if (index >= 1 && index < at.Length)
        {
            at[index] = Stopwatch.GetTimestamp();
        }
    }

    /// <summary>
    /// Each stage's p50 and p99 (ms) over the events seen at every stage, what the slowest 1%
    /// spent in each on average, and the worst total per quarter second of the window.
    /// </summary>
    public string Breakdown()
    {
        var names = new[] { "to the worker's consumer", "staged and queued", "engine and produce call", "to its acknowledgement", "to the reader" };
        var rows = new List<(double[] Stages, double Total)>();
        var ack = new List<double>();
        long start = Sent.Skip(1).Where(t => t != 0).DefaultIfEmpty().Min();
        var worst = new double[64];
        for (int i = 1; i < Sent.Length; i++)
        {
            long[] points = [Sent[i], Consumed[i], Draining[i], Drained[i], Delivered[i], Read[i]];
            if (points.Any(t => t == 0))
            {
                continue;
            }
            var stages = new double[names.Length];
            for (int s = 0; s < names.Length; s++)
            {
                stages[s] = Ms(points[s], points[s + 1]);
            }
            if (Acked[i] != 0)
            {
                ack.Add(Ms(Sent[i], Acked[i]));
            }
            double total = Ms(Sent[i], Read[i]);
            rows.Add((stages, total));
            int bucket = (int)Math.Min(worst.Length - 1, Ms(start, Sent[i]) / 250);
            worst[bucket] = Math.Max(worst[bucket], total);
        }
        if (rows.Count == 0)
        {
            return "  breakdown: no event was seen at every stage";
        }
        var slowest = rows.OrderByDescending(r => r.Total).Take(Math.Max(1, rows.Count / 100)).ToList();
        var sb = new StringBuilder();
        sb.Append(CultureInfo.InvariantCulture, $"  breakdown over {rows.Count:N0} events, p50 / p99 / mean of the slowest 1% (ms):");
        for (int s = 0; s < names.Length; s++)
        {
            var sorted = rows.Select(r => r.Stages[s]).Order().ToList();
            sb.Append(CultureInfo.InvariantCulture, $"\n    {names[s]}: {Pct(sorted, 0.5):0.0} / {Pct(sorted, 0.99):0.0} / {slowest.Average(r => r.Stages[s]):0.0}");
        }
        var acks = ack.Order().ToList();
        sb.Append(CultureInfo.InvariantCulture, $"\n    (the benchmark's own producer, produce to acknowledgement: {Pct(acks, 0.5):0.0} / {Pct(acks, 0.99):0.0})");
        int buckets = Array.FindLastIndex(worst, w => w > 0) + 1;
        sb.Append("\n    worst total per 0.25 s of the window: ").Append(string.Join(" ", worst.Take(buckets).Select(w => w.ToString("0", CultureInfo.InvariantCulture))));
        return sb.ToString();
    }

    private static double Ms(long from, long to) => (to - from) * 1000.0 / Stopwatch.Frequency;

    private static double Pct(List<double> sorted, double q) => sorted.Count == 0 ? double.NaN : sorted[Math.Min(sorted.Count - 1, (int)(q * sorted.Count))];
}
