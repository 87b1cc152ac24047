using System.Buffers;
using System.Diagnostics;
using System.Globalization;
using System.Text;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Kafka.Checkpoints;

namespace Driftline.Kafka.Benchmarks;

/// <summary>
/// What one partition's checkpoint costs, with no Kafka and nothing else running on the
/// thread: the snapshot the draining thread takes at the cut (time and bytes allocated) and
/// the JSON the writer thread makes of it. One partition of the latency run's stream: 16 of the
/// 64 keys, <c>events</c> events and their labels (half inline, half 50 events later), so the
/// pending store holds the graded ids a real partition keeps. Bytes allocated are the
/// thread's own count, which the machine's load does not move; times are medians of 7.
/// </summary>
internal static class CheckpointCost
{
    public static void Run(int events)
    {
        var engine = new ScoringEngine(new DriftlineOptions(), new EngineOnly.NullSink());
        var parser = new Driftline.Core.Events.EventParser();
        var record = new Driftline.Core.Events.ParsedRecord();
        var zones = new[] { "north", "south", "east", "west" };
        for (int index = 0; index < events; index++)
        {
            int key = index % 16 * 4;
            Feed(string.Create(CultureInfo.InvariantCulture, $"{{\"id\":\"{index}\",\"key\":\"k{key}\",\"features\":{{\"zone\":\"{zones[index % 4]}\",\"distance_km\":{index % 97 / 10.0},\"items\":{index % 7},\"raining\":{(index % 3 == 0 ? "true" : "false")},\"tags\":[\"t{index % 5}\"]}}{(index % 2 == 0 ? ",\"label\":" + (index % 5 == 0 ? 1 : 0) : "")}}}"));
            int labelled = index - 50;
            if (labelled >= 0 && labelled % 2 == 1)
            {
                Feed($"{{\"id\":\"{labelled}\",\"label\":{(labelled % 5 == 0 ? 1 : 0)}}}");
            }
        }
        var snapshotMs = new List<double>();
        var jsonMs = new List<double>();
        long snapshotBytes = 0, jsonBytes = 0;
        byte[] file = [];
        // The worker's writer serialises into one buffer it keeps; a build from before that has
        // only the method that returns a new array, which this then measures instead (A/B runs).
        var kept = typeof(CheckpointStore).GetMethod(nameof(CheckpointStore.Serialize), [typeof(PartitionCheckpoint), typeof(ArrayBufferWriter<byte>)]);
        var buffer = new ArrayBufferWriter<byte>();
        for (int round = 0; round < 8; round++)
        {
            long before = GC.GetAllocatedBytesForCurrentThread();
            var clock = Stopwatch.StartNew();
            var checkpoint = new PartitionCheckpoint { EventsTopic = "events", Partition = 0, EventsOffset = events, LabelsOffset = -1, WrittenAt = new DateTime(2026, 12, 3, 0, 0, 0, DateTimeKind.Utc), Snapshot = engine.Snapshot() };
            double taken = clock.Elapsed.TotalMilliseconds;
            long afterSnapshot = GC.GetAllocatedBytesForCurrentThread();
            clock.Restart();
            byte[]? json = kept is null ? CheckpointStore.Serialize(checkpoint) : null;
            kept?.Invoke(null, [checkpoint, buffer]);
            double serialised = clock.Elapsed.TotalMilliseconds;
            long afterJson = GC.GetAllocatedBytesForCurrentThread();
            // As the worker's writer does once the checkpoint is written: the stores' copies go back for the next snapshot.
            checkpoint.Snapshot.ReleaseCopies();
            if (round > 0)
            {
                // The first round also pays for the serializer's metadata and JIT.
                snapshotMs.Add(taken);
                jsonMs.Add(serialised);
            }
            snapshotBytes = afterSnapshot - before;
            jsonBytes = afterJson - afterSnapshot;
            file = json ?? buffer.WrittenSpan.ToArray();
        }
        // The file's bytes are the same before and after a change of how they are made: compare the hashes of two builds.
        string hash = Convert.ToHexString(System.Security.Cryptography.SHA256.HashData(file))[..16];
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"one partition's checkpoint after {events:N0} events ({engine.Pending.Count:N0} waiting or graded predictions kept): snapshot {Median(snapshotMs):0.00} ms, {snapshotBytes / 1e6:0.00} MB allocated; JSON {(kept is null ? "into a new array" : "into a kept buffer")} {Median(jsonMs):0.00} ms, {jsonBytes / 1e6:0.00} MB allocated; {file.Length / 1e6:0.00} MB written, SHA-256 {hash}"));

        void Feed(string line)
        {
            if (parser.TryParse(Encoding.UTF8.GetBytes(line), record, out _))
            {
                engine.Process(record);
            }
        }
    }

    private static double Median(List<double> values) => values.Order().ElementAt(values.Count / 2);
}
