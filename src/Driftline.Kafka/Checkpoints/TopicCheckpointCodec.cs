using System.Buffers.Binary;
using System.Globalization;
using System.IO.Hashing;
using System.Security.Cryptography;
using System.Text.Json;

namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// How a checkpoint is laid out on the compacted checkpoint topic. Its payload (the same JSON
/// as the file) is cut into chunks of at most <see cref="ChunkBytes"/>, because a model
/// snapshot runs to megabytes and Kafka refuses records over about 1 MB by default. Every
/// writer (one per worker start, <see cref="NewWriterId"/>) has keys of its own, so two owners
/// of one partition at once never write the same key: each chunk is keyed
/// <c>&lt;events-topic&gt;/&lt;partition&gt;/&lt;writer&gt;/&lt;slot&gt;/&lt;index&gt;</c>
/// and starts with a <see cref="HeaderBytes"/>-byte header; the manifest, keyed
/// <c>&lt;events-topic&gt;/&lt;partition&gt;/&lt;writer&gt;</c>, is written last (see
/// <see cref="CheckpointManifest"/>). Each writer counts its own generations and alternates
/// its own two slots; a reader restores the manifest that is ahead (see
/// <see cref="TopicCheckpointAssembler.Manifests"/>).
/// </summary>
/// <remarks>
/// Builds before per-writer keys wrote <c>&lt;events-topic&gt;/&lt;partition&gt;</c> and
/// <c>&lt;events-topic&gt;/&lt;partition&gt;/&lt;slot&gt;/&lt;index&gt;</c>; those keys are
/// still read, as the writer <c>""</c>, so an upgrade restores them, and deleted like any
/// other writer's after the next owner's first write. Chunk header, little-endian: the bytes
/// <c>DLCK</c>, layout version (1), slot, two zero bytes, generation (int64), index (int32),
/// chunk count (int32), payload length (int64), payload XxHash64 (uint64). A new checkpoint
/// with fewer chunks than the last one in its slot leaves that one's higher chunks behind:
/// their generation does not match the manifest, so readers skip them, and the writer deletes
/// them with tombstones when it knows of them.
/// </remarks>
internal static class TopicCheckpointCodec
{
    /// <summary>Largest payload share of one chunk: 512 KiB, well under the 1,000,000-byte default record limit once the header and key are added.</summary>
    public const int ChunkBytes = 512 * 1024;

    /// <summary>Bytes of the header before each chunk's data.</summary>
    public const int HeaderBytes = 40;

    private const byte LayoutVersion = 1;

    private static ReadOnlySpan<byte> Magic => "DLCK"u8;

    /// <summary>Longest writer id a reader takes.</summary>
    public const int MaxWriterLength = 32;

    /// <summary>
    /// A writer id for one worker start: 8 random lowercase hex digits. Two writers of one
    /// partition at once share an id with a chance of 1 in 2^32.
    /// </summary>
    public static string NewWriterId() => Convert.ToHexStringLower(RandomNumberGenerator.GetBytes(4));

    /// <summary>True for a writer id this layout reads: 1 to <see cref="MaxWriterLength"/> lowercase hex digits.</summary>
    public static bool IsWriterId(ReadOnlySpan<char> text) =>
        text.Length is > 0 and <= MaxWriterLength && !text.ContainsAnyExcept("0123456789abcdef");

    /// <summary>Key of <paramref name="writer"/>'s manifest of a partition; the writer <c>""</c> is the layout before per-writer keys.</summary>
    public static string ManifestKey(string eventsTopic, int partition, string writer) => writer.Length == 0
        ? string.Create(CultureInfo.InvariantCulture, $"{eventsTopic}/{partition}")
        : string.Create(CultureInfo.InvariantCulture, $"{eventsTopic}/{partition}/{writer}");

    /// <summary>Key of one chunk of <paramref name="writer"/>; the writer <c>""</c> is the layout before per-writer keys.</summary>
    public static string ChunkKey(string eventsTopic, int partition, string writer, int slot, int index) => writer.Length == 0
        ? string.Create(CultureInfo.InvariantCulture, $"{eventsTopic}/{partition}/{slot}/{index}")
        : string.Create(CultureInfo.InvariantCulture, $"{eventsTopic}/{partition}/{writer}/{slot}/{index}");

    /// <summary>The hash written in headers and manifests, 16 hex digits.</summary>
    public static string HashText(ulong hash) => hash.ToString("x16", CultureInfo.InvariantCulture);

    /// <summary>
    /// The records of one checkpoint of <paramref name="writer"/> in the order they must be
    /// written: the chunks, then the manifest. An empty payload still gets one (empty) chunk, so
    /// every manifest names at least one. The writer <c>""</c> gives the keys of the layout
    /// before per-writer keys (the manifest and chunks themselves did not change). Each chunk is
    /// a new array; the worker's writer fills one kept buffer with <see cref="WriteChunk"/>
    /// instead (<see cref="Worker.TopicCheckpointWriter"/>).
    /// </summary>
    public static List<CheckpointRecord> Encode(PartitionCheckpoint checkpoint, byte[] payload, long generation, int slot, string writer, int chunkBytes = ChunkBytes)
    {
        ArgumentNullException.ThrowIfNull(checkpoint);
        ArgumentNullException.ThrowIfNull(payload);
        RequireWriter(writer);
        ArgumentOutOfRangeException.ThrowIfLessThan(chunkBytes, 1);
        RequireSlot(slot);
        ulong hash = XxHash64.HashToUInt64(payload);
        int count = ChunkCount(payload.Length, chunkBytes);
        var records = new List<CheckpointRecord>(count + 1);
        for (int i = 0; i < count; i++)
        {
            var data = ChunkData(payload, i, chunkBytes);
            var value = new byte[HeaderBytes + data.Length];
            WriteChunk(value, data, generation, slot, i, count, payload.LongLength, hash);
            records.Add(new(ChunkKey(checkpoint.EventsTopic, checkpoint.Partition, writer, slot, i), value));
        }
        records.Add(new(ManifestKey(checkpoint.EventsTopic, checkpoint.Partition, writer), Manifest(checkpoint, generation, slot, count, payload.LongLength, hash, writer)));
        return records;
    }

    /// <summary>How many chunks a payload of <paramref name="length"/> bytes takes (at least one).</summary>
    public static int ChunkCount(long length, int chunkBytes = ChunkBytes) => Math.Max(1, (int)((length + chunkBytes - 1) / chunkBytes));

    /// <summary>The part of <paramref name="payload"/> that chunk <paramref name="index"/> carries.</summary>
    public static ReadOnlySpan<byte> ChunkData(ReadOnlySpan<byte> payload, int index, int chunkBytes = ChunkBytes)
    {
        int start = index * chunkBytes;
        return payload.Slice(start, Math.Min(chunkBytes, payload.Length - start));
    }

    /// <summary>
    /// Writes chunk <paramref name="index"/> of <paramref name="count"/> (its header, then
    /// <paramref name="data"/>) into <paramref name="value"/>, which is exactly
    /// <see cref="HeaderBytes"/> + <paramref name="data"/>'s length long.
    /// </summary>
    public static void WriteChunk(Span<byte> value, ReadOnlySpan<byte> data, long generation, int slot, int index, int count, long payloadLength, ulong hash)
    {
        RequireSlot(slot);
        if (value.Length != HeaderBytes + data.Length)
        {
            throw new ArgumentException($"a chunk of {data.Length} bytes takes {HeaderBytes + data.Length} bytes, not {value.Length}", nameof(value));
        }
        var header = value[..HeaderBytes];
        Magic.CopyTo(header);
        header[4] = LayoutVersion;
        header[5] = (byte)slot;
        header[6] = 0;
        header[7] = 0;
        BinaryPrimitives.WriteInt64LittleEndian(header[8..], generation);
        BinaryPrimitives.WriteInt32LittleEndian(header[16..], index);
        BinaryPrimitives.WriteInt32LittleEndian(header[20..], count);
        BinaryPrimitives.WriteInt64LittleEndian(header[24..], payloadLength);
        BinaryPrimitives.WriteUInt64LittleEndian(header[32..], hash);
        data.CopyTo(value[HeaderBytes..]);
    }

    /// <summary>The manifest's value: written last, it makes the chunks of <paramref name="generation"/> of <paramref name="writer"/> the current checkpoint.</summary>
    public static byte[] Manifest(PartitionCheckpoint checkpoint, long generation, int slot, int count, long payloadLength, ulong hash, string writer)
    {
        ArgumentNullException.ThrowIfNull(checkpoint);
        RequireWriter(writer);
        var manifest = new CheckpointManifest
        {
            EventsTopic = checkpoint.EventsTopic,
            Partition = checkpoint.Partition,
            Generation = generation,
            Slot = slot,
            Chunks = count,
            Length = payloadLength,
            Hash = HashText(hash),
            EventsOffset = checkpoint.EventsOffset,
            LabelsOffset = checkpoint.LabelsOffset,
            WrittenAt = checkpoint.WrittenAt,
            Writer = writer,
        };
        return JsonSerializer.SerializeToUtf8Bytes(manifest, ManifestJsonContext.Default.CheckpointManifest);
    }

    private static void RequireSlot(int slot)
    {
        if (slot is not (0 or 1))
        {
            throw new ArgumentOutOfRangeException(nameof(slot), slot, "a slot is 0 or 1");
        }
    }

    private static void RequireWriter(string writer)
    {
        ArgumentNullException.ThrowIfNull(writer);
        if (writer.Length > 0 && !IsWriterId(writer))
        {
            throw new ArgumentException($"a writer id is 1 to {MaxWriterLength} lowercase hex digits, not '{writer}'", nameof(writer));
        }
    }

    /// <summary>Reads a chunk's header. Throws <see cref="InvalidDataException"/> when the value is not a chunk of this layout.</summary>
    public static CheckpointChunk ReadChunk(byte[] value)
    {
        ArgumentNullException.ThrowIfNull(value);
        if (value.Length < HeaderBytes || !value.AsSpan(0, 4).SequenceEqual(Magic) || value[4] != LayoutVersion || value[5] > 1)
        {
            throw new InvalidDataException("a chunk record has no Driftline version 1 chunk header");
        }
        var header = value.AsSpan(0, HeaderBytes);
        return new CheckpointChunk(
            BinaryPrimitives.ReadInt64LittleEndian(header[8..]),
            value[5],
            BinaryPrimitives.ReadInt32LittleEndian(header[16..]),
            BinaryPrimitives.ReadInt32LittleEndian(header[20..]),
            BinaryPrimitives.ReadInt64LittleEndian(header[24..]),
            BinaryPrimitives.ReadUInt64LittleEndian(header[32..]),
            new ArraySegment<byte>(value, HeaderBytes, value.Length - HeaderBytes));
    }

    /// <summary>Reads a manifest. Throws <see cref="InvalidDataException"/> when the value is not a manifest of this layout.</summary>
    public static CheckpointManifest ReadManifest(byte[] value)
    {
        ArgumentNullException.ThrowIfNull(value);
        CheckpointManifest? manifest;
        try
        {
            manifest = JsonSerializer.Deserialize(value, ManifestJsonContext.Default.CheckpointManifest);
        }
        catch (JsonException ex)
        {
            throw new InvalidDataException($"its manifest is not readable: {ex.Message}", ex);
        }
        if (manifest is null || manifest.Format != CheckpointManifest.FormatName || manifest.FormatVersion != CheckpointManifest.CurrentVersion)
        {
            throw new InvalidDataException($"its manifest is not a version {CheckpointManifest.CurrentVersion} Driftline checkpoint manifest");
        }
        if (manifest.Chunks < 1 || manifest.Slot is not (0 or 1) || manifest.Length < 0)
        {
            throw new InvalidDataException($"its manifest names {manifest.Chunks} chunks in slot {manifest.Slot} of {manifest.Length} bytes");
        }
        return manifest;
    }
}
