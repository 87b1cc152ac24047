using Driftline.Kafka.Checkpoints;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class TopicCheckpointCodecTests
{
    private const string Topic = "orders";
    private const string Writer = "a1";

    [Fact]
    public void Encode_ThenAssemble_GivesThePayloadBack()
    {
        var payload = Payload(2_500, seed: 1);
        var records = TopicCheckpointCodec.Encode(Checkpoint(2, 100), payload, generation: 1, slot: 0, Writer, chunkBytes: 1_000);

        Assert.Equal(4, records.Count); // three chunks, then the manifest
        Assert.Equal("orders/2/a1", records[^1].Key);
        Assert.Equal(["orders/2/a1/0/0", "orders/2/a1/0/1", "orders/2/a1/0/2"], records.Take(3).Select(r => r.Key));
        var assembler = Feed(records);
        var manifest = assembler.Manifest(2);
        Assert.NotNull(manifest);
        Assert.Equal(3, manifest.Chunks);
        Assert.Equal(100, manifest.EventsOffset);
        Assert.Equal(payload, assembler.Assemble(manifest));
    }

    [Fact]
    public void Assemble_OlderAndUnfinishedGenerationsAround_UsesTheManifestsGeneration()
    {
        var first = Payload(3_000, seed: 1);
        var second = Payload(1_500, seed: 2);
        var third = Payload(800, seed: 3);
        var fourth = Payload(2_000, seed: 4);
        var records = new List<CheckpointRecord>();
        records.AddRange(TopicCheckpointCodec.Encode(Checkpoint(1, 10), first, 1, slot: 0, Writer, chunkBytes: 1_000));
        records.AddRange(TopicCheckpointCodec.Encode(Checkpoint(1, 20), second, 2, slot: 1, Writer, chunkBytes: 1_000));
        // Fewer chunks than generation 1 left in slot 0: its chunks 1 and 2 stay behind.
        records.AddRange(TopicCheckpointCodec.Encode(Checkpoint(1, 30), third, 3, slot: 0, Writer, chunkBytes: 1_000));
        // A checkpoint cut short by a crash: its chunks went out, its manifest never did.
        records.AddRange(TopicCheckpointCodec.Encode(Checkpoint(1, 40), fourth, 4, slot: 1, Writer, chunkBytes: 1_000).SkipLast(1));
        // Another events topic and another partition share the topic.
        records.AddRange(TopicCheckpointCodec.Encode(Checkpoint(3, 50), fourth, 9, slot: 0, Writer, chunkBytes: 1_000));
        records.AddRange(TopicCheckpointCodec.Encode(new PartitionCheckpoint { EventsTopic = "other", Partition = 1 }, fourth, 9, slot: 0, Writer, chunkBytes: 1_000));
        records.Add(new("not a checkpoint key", [1, 2, 3]));

        var assembler = Feed(records, partition: 1);
        var manifest = assembler.Manifest(1)!;

        Assert.Equal(3, manifest.Generation);
        Assert.Equal(30, manifest.EventsOffset);
        Assert.Equal(third, assembler.Assemble(manifest));
        Assert.Equal(3, assembler.SlotExtent(1, Writer, 0));
        Assert.Equal(2, assembler.SlotExtent(1, Writer, 1));
    }

    [Fact]
    public void Assemble_ChunkMissing_ThrowsNamingTheChunk()
    {
        var records = TopicCheckpointCodec.Encode(Checkpoint(0, 5), Payload(2_500, seed: 1), 7, slot: 1, Writer, chunkBytes: 1_000);
        records.RemoveAt(1);
        var assembler = Feed(records, partition: 0);

        var error = Assert.Throws<InvalidDataException>(() => assembler.Assemble(assembler.Manifest(0)!));
        Assert.Contains("chunk 1 of 3 is missing", error.Message, StringComparison.Ordinal);
        Assert.Contains("generation 7", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Assemble_ChunkOfAnotherGenerationInPlace_Throws()
    {
        // A manifest whose chunk 1 was overwritten by another writer's checkpoint.
        var mine = TopicCheckpointCodec.Encode(Checkpoint(0, 5), Payload(2_500, seed: 1), 7, slot: 0, Writer, chunkBytes: 1_000);
        var theirs = TopicCheckpointCodec.Encode(Checkpoint(0, 6), Payload(2_500, seed: 2), 8, slot: 0, Writer, chunkBytes: 1_000);
        var assembler = Feed([mine[0], theirs[1], mine[2], mine[^1]], partition: 0);

        var error = Assert.Throws<InvalidDataException>(() => assembler.Assemble(assembler.Manifest(0)!));
        Assert.Contains("chunk 1 of 3 belongs to generation 8", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Assemble_ChunkBytesChanged_ThrowsDamaged()
    {
        var records = TopicCheckpointCodec.Encode(Checkpoint(0, 5), Payload(2_500, seed: 1), 7, slot: 0, Writer, chunkBytes: 1_000);
        records[1].Value![TopicCheckpointCodec.HeaderBytes + 10] ^= 0xff;
        var assembler = Feed(records, partition: 0);

        var error = Assert.Throws<InvalidDataException>(() => assembler.Assemble(assembler.Manifest(0)!));
        Assert.Contains("is damaged", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Manifest_Tombstoned_IsNone()
    {
        var records = TopicCheckpointCodec.Encode(Checkpoint(0, 5), Payload(100, seed: 1), 1, slot: 0, Writer);
        records.Add(new(TopicCheckpointCodec.ManifestKey(Topic, 0, Writer), null));

        Assert.Null(Feed(records, partition: 0).Manifest(0));
    }

    [Fact]
    public void Manifest_NotAManifest_ThrowsNamingTheTopic()
    {
        var assembler = Feed([new(TopicCheckpointCodec.ManifestKey(Topic, 0, Writer), "{\"format\":\"x\"}"u8.ToArray())], partition: 0);

        var error = Assert.Throws<InvalidDataException>(() => assembler.Manifest(0));
        Assert.Contains("topic 'checkpoints'", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Manifests_TwoWritersAndTheOldLayout_TheOneAheadFirstEachWithItsOwnChunks()
    {
        // Two owners at once and a checkpoint of a build before per-writer keys, all one
        // partition's, with the same generation and slot: no key is shared, so each assembles.
        var records = new List<CheckpointRecord>();
        records.AddRange(TopicCheckpointCodec.Encode(Checkpoint(1, 10, labelsOffset: 5), Payload(2_500, seed: 1), 2, slot: 1, "a1", chunkBytes: 1_000));
        records.AddRange(TopicCheckpointCodec.Encode(Checkpoint(1, 10, labelsOffset: 7), Payload(1_500, seed: 2), 2, slot: 1, "b2", chunkBytes: 1_000));
        records.AddRange(TopicCheckpointCodec.Encode(Checkpoint(1, 3), Payload(3_500, seed: 3), 2, slot: 1, writer: "", chunkBytes: 1_000));
        // Keys of no layout: not a hex writer id, an empty one.
        records.Add(new("orders/1/Zz", [1]));
        records.Add(new("orders/1//1/0", [1]));

        var assembler = Feed(records, partition: 1);
        var manifests = assembler.Manifests(1);

        Assert.Equal(["b2", "a1", ""], manifests.Select(m => m.Writer));
        Assert.Equal(Payload(1_500, seed: 2), assembler.Assemble(manifests[0]));
        Assert.Equal(Payload(2_500, seed: 1), assembler.Assemble(manifests[1]));
        Assert.Equal(Payload(3_500, seed: 3), assembler.Assemble(manifests[2]));
        Assert.Equal("b2", assembler.Manifest(1)!.Writer);
        Assert.Equal(3, assembler.SlotExtent(1, "a1", 1));
        Assert.Equal(2, assembler.SlotExtent(1, "b2", 1));
        Assert.Equal(4, assembler.SlotExtent(1, "", 1));
        Assert.Equal(0, assembler.SlotExtent(1, "b2", 0));
        var (otherManifests, otherChunks) = assembler.KeysOfOthers(1, "b2");
        Assert.Equal(["orders/1", "orders/1/a1"], otherManifests);
        Assert.Equal(["orders/1/1/0", "orders/1/1/1", "orders/1/1/2", "orders/1/1/3", "orders/1/a1/1/0", "orders/1/a1/1/1", "orders/1/a1/1/2"], otherChunks);
    }

    [Fact]
    public void Encode_OldLayoutWriter_GivesTheKeysAndManifestFieldsOfTheLayoutBefore()
    {
        // The layout before per-writer keys (Kafka README before issue 15): manifest
        // <topic>/<partition>, chunks <topic>/<partition>/<slot>/<index>, and a manifest of
        // these twelve fields only, so records of either layout are told apart by their keys.
        var records = TopicCheckpointCodec.Encode(Checkpoint(2, 100), Payload(1_500, seed: 1), 4, slot: 1, writer: "", chunkBytes: 1_000);

        Assert.Equal(["orders/2/1/0", "orders/2/1/1", "orders/2"], records.Select(r => r.Key));
        using var manifest = System.Text.Json.JsonDocument.Parse(records[^1].Value);
        Assert.Equal(["format", "format_version", "events_topic", "partition", "generation", "slot", "chunks", "length", "hash", "events_offset", "labels_offset", "written_at"],
            manifest.RootElement.EnumerateObject().Select(p => p.Name));
    }

    private static TopicCheckpointAssembler Feed(IEnumerable<CheckpointRecord> records, int partition = 2)
    {
        var assembler = new TopicCheckpointAssembler(Topic, [partition], "checkpoints");
        foreach (var record in records)
        {
            assembler.Add(record.Key, record.Value);
        }
        return assembler;
    }

    private static PartitionCheckpoint Checkpoint(int partition, long eventsOffset, long labelsOffset = 0) =>
        new() { EventsTopic = Topic, Partition = partition, EventsOffset = eventsOffset, LabelsOffset = labelsOffset, WrittenAt = new DateTime(2026, 3, 2, 10, 0, 0, DateTimeKind.Utc) };

    private static byte[] Payload(int length, int seed)
    {
        var bytes = new byte[length];
        new Random(seed).NextBytes(bytes);
        return bytes;
    }
}
