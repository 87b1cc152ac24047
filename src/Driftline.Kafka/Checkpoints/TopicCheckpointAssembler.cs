using System.Globalization;
using System.IO.Hashing;

namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// Collects what the checkpoint topic holds for some partitions of one events topic, fed its
/// records in log order, and puts each partition's latest checkpoint back together. It keeps
/// the latest value per key, as compaction would, so it gives the same answer on a topic that
/// has not been compacted yet (or never is, like the test cluster's). Records of other events
/// topics or partitions, and values under keys it does not know, are skipped.
/// </summary>
internal sealed class TopicCheckpointAssembler
{
    private readonly string _eventsTopic;
    private readonly string _source;
    private readonly HashSet<int> _partitions;
    private readonly Dictionary<int, byte[]> _manifests = [];
    private readonly Dictionary<string, byte[]> _chunks = new(StringComparer.Ordinal);

    /// <summary>Collects for <paramref name="partitions"/> of <paramref name="eventsTopic"/>; <paramref name="checkpointTopic"/> names the topic in errors.</summary>
    public TopicCheckpointAssembler(string eventsTopic, IEnumerable<int> partitions, string checkpointTopic)
    {
        ArgumentException.ThrowIfNullOrEmpty(eventsTopic);
        ArgumentNullException.ThrowIfNull(partitions);
        _eventsTopic = eventsTopic;
        _source = checkpointTopic;
        _partitions = [.. partitions];
    }

    /// <summary>Takes one record; a null <paramref name="value"/> (a tombstone) deletes its key.</summary>
    public void Add(string key, byte[]? value)
    {
        ArgumentNullException.ThrowIfNull(key);
        var parts = key.Split('/');
        if (parts[0] != _eventsTopic || parts.Length is not (2 or 4)
            || !int.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out int partition) || !_partitions.Contains(partition))
        {
            return;
        }
        if (parts.Length == 2)
        {
            Put(_manifests, partition, value);
        }
        else
        {
            Put(_chunks, key, value);
        }
    }

    /// <summary>
    /// The latest manifest of <paramref name="partition"/>, or null when the topic holds none.
    /// Throws <see cref="InvalidDataException"/> when the manifest is unreadable.
    /// </summary>
    public CheckpointManifest? Manifest(int partition)
    {
        if (!_manifests.TryGetValue(partition, out var value))
        {
            return null;
        }
        CheckpointManifest manifest;
        try
        {
            manifest = TopicCheckpointCodec.ReadManifest(value);
        }
        catch (InvalidDataException ex)
        {
            throw new InvalidDataException($"{Describe(partition)}: {ex.Message}", ex);
        }
        if (manifest.EventsTopic != _eventsTopic || manifest.Partition != partition)
        {
            throw new InvalidDataException($"{Describe(partition)}: its manifest is for {manifest.EventsTopic} partition {manifest.Partition}");
        }
        return manifest;
    }

    /// <summary>
    /// The payload of the checkpoint <paramref name="manifest"/> names: its chunks of the same
    /// generation and hash, joined and checked against the length and hash. Throws
    /// <see cref="InvalidDataException"/> when a chunk is missing, belongs to another
    /// checkpoint, or the joined bytes do not match: resuming from nothing instead would
    /// double-apply labels, so that is an operator's call.
    /// </summary>
    public byte[] Assemble(CheckpointManifest manifest)
    {
        ArgumentNullException.ThrowIfNull(manifest);
        string where = $"{Describe(manifest.Partition)} (generation {manifest.Generation})";
        var payload = new byte[manifest.Length];
        long filled = 0;
        for (int i = 0; i < manifest.Chunks; i++)
        {
            if (!_chunks.TryGetValue(TopicCheckpointCodec.ChunkKey(_eventsTopic, manifest.Partition, manifest.Slot, i), out var value))
            {
                throw new InvalidDataException($"{where} is incomplete: chunk {i} of {manifest.Chunks} is missing");
            }
            CheckpointChunk chunk;
            try
            {
                chunk = TopicCheckpointCodec.ReadChunk(value);
            }
            catch (InvalidDataException ex)
            {
                throw new InvalidDataException($"{where}: chunk {i}: {ex.Message}", ex);
            }
            if (chunk.Generation != manifest.Generation || TopicCheckpointCodec.HashText(chunk.Hash) != manifest.Hash
                || chunk.Index != i || chunk.Count != manifest.Chunks || chunk.Length != manifest.Length)
            {
                throw new InvalidDataException($"{where} is incomplete: chunk {i} of {manifest.Chunks} belongs to generation {chunk.Generation}");
            }
            if (filled + chunk.Data.Count > payload.LongLength)
            {
                throw new InvalidDataException($"{where} is damaged: its chunks hold more than the {manifest.Length} bytes the manifest names");
            }
            chunk.Data.AsSpan().CopyTo(payload.AsSpan((int)filled));
            filled += chunk.Data.Count;
        }
        if (filled != payload.LongLength || TopicCheckpointCodec.HashText(XxHash64.HashToUInt64(payload)) != manifest.Hash)
        {
            throw new InvalidDataException($"{where} is damaged: its chunks do not add up to the {manifest.Length} bytes of hash {manifest.Hash} the manifest names");
        }
        return payload;
    }

    /// <summary>
    /// One more than the highest chunk index held in <paramref name="slot"/> of
    /// <paramref name="partition"/> (0 when none): how far the writer's next checkpoint in that
    /// slot must delete leftovers of a longer one.
    /// </summary>
    public int SlotExtent(int partition, int slot)
    {
        string prefix = string.Create(CultureInfo.InvariantCulture, $"{_eventsTopic}/{partition}/{slot}/");
        int extent = 0;
        foreach (var key in _chunks.Keys)
        {
            if (key.StartsWith(prefix, StringComparison.Ordinal) && int.TryParse(key.AsSpan(prefix.Length), NumberStyles.None, CultureInfo.InvariantCulture, out int index))
            {
                extent = Math.Max(extent, index + 1);
            }
        }
        return extent;
    }

    private string Describe(int partition) => $"the checkpoint of {_eventsTopic} partition {partition} on topic '{_source}'";

    private static void Put<TKey>(Dictionary<TKey, byte[]> values, TKey key, byte[]? value) where TKey : notnull
    {
        if (value is null)
        {
            values.Remove(key);
        }
        else
        {
            values[key] = value;
        }
    }
}
