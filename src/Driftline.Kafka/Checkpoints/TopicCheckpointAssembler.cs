using System.Globalization;
using System.IO.Hashing;

namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// Collects what the checkpoint topic holds for some partitions of one events topic, fed its
/// records in log order, and puts each partition's checkpoints back together. It keeps the
/// latest value per key, as compaction would, so it gives the same answer on a topic that has
/// not been compacted yet (or never is, like the test cluster's). Each writer's keys are kept
/// apart (see <see cref="TopicCheckpointCodec"/>), those of the layout before per-writer keys
/// as the writer <c>""</c>. Records of other events topics or partitions, and values under
/// keys it does not know, are skipped.
/// </summary>
internal sealed class TopicCheckpointAssembler
{
    private readonly string _eventsTopic;
    private readonly string _source;
    private readonly HashSet<int> _partitions;
    private readonly Dictionary<(int Partition, string Writer), byte[]> _manifests = [];
    private readonly Dictionary<string, (int Partition, string Writer, byte[] Value)> _chunks = new(StringComparer.Ordinal);

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
        if (parts[0] != _eventsTopic || parts.Length is < 2 or > 5
            || !int.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out int partition) || !_partitions.Contains(partition))
        {
            return;
        }
        // 2 parts: a manifest of the layout before per-writer keys, 4: one of its chunks; 3 and 5: a writer's.
        string writer = parts.Length is 3 or 5 ? parts[2] : "";
        if (writer.Length == 0 && parts.Length is 3 or 5 || writer.Length > 0 && !TopicCheckpointCodec.IsWriterId(writer))
        {
            return;
        }
        if (parts.Length is 2 or 3)
        {
            if (value is null)
            {
                _manifests.Remove((partition, writer));
            }
            else
            {
                _manifests[(partition, writer)] = value;
            }
        }
        else if (value is null)
        {
            _chunks.Remove(key);
        }
        else
        {
            _chunks[key] = (partition, writer, value);
        }
    }

    /// <summary>
    /// Every writer's latest manifest of <paramref name="partition"/>, the one ahead first: by
    /// events offset, then labels offset (the order the folder's checkpoints keep), then writer
    /// id (so equal positions, which hold the same state, always give the same answer). Empty
    /// when the topic holds none. Throws <see cref="InvalidDataException"/> when one is
    /// unreadable: its positions are unknown, so nothing can be said to be ahead of it.
    /// </summary>
    public List<CheckpointManifest> Manifests(int partition)
    {
        var found = new List<CheckpointManifest>();
        foreach (var ((p, writer), value) in _manifests)
        {
            if (p == partition)
            {
                found.Add(Read(partition, writer, value));
            }
        }
        found.Sort((x, y) => (y.EventsOffset, y.LabelsOffset).CompareTo((x.EventsOffset, x.LabelsOffset)) is var order and not 0
            ? order : string.CompareOrdinal(x.Writer, y.Writer));
        return found;
    }

    /// <summary>
    /// The manifest of <paramref name="partition"/> that is ahead (the first of
    /// <see cref="Manifests"/>), or null when the topic holds none.
    /// </summary>
    public CheckpointManifest? Manifest(int partition) => Manifests(partition).FirstOrDefault();

    /// <summary>
    /// <paramref name="writer"/>'s latest manifest of <paramref name="partition"/>, or null.
    /// Throws <see cref="InvalidDataException"/> when it is unreadable.
    /// </summary>
    public CheckpointManifest? Manifest(int partition, string writer) =>
        _manifests.TryGetValue((partition, writer), out var value) ? Read(partition, writer, value) : null;

    private CheckpointManifest Read(int partition, string writer, byte[] value)
    {
        string where = $"{Describe(partition)} (key '{TopicCheckpointCodec.ManifestKey(_eventsTopic, partition, writer)}')";
        CheckpointManifest manifest;
        try
        {
            manifest = TopicCheckpointCodec.ReadManifest(value);
        }
        catch (InvalidDataException ex)
        {
            throw new InvalidDataException($"{where}: {ex.Message}", ex);
        }
        if (manifest.EventsTopic != _eventsTopic || manifest.Partition != partition)
        {
            throw new InvalidDataException($"{where}: its manifest is for {manifest.EventsTopic} partition {manifest.Partition}");
        }
        manifest.Writer = writer;
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
        string where = $"{Describe(manifest.Partition)} (writer '{manifest.Writer}', generation {manifest.Generation})";
        var payload = new byte[manifest.Length];
        long filled = 0;
        for (int i = 0; i < manifest.Chunks; i++)
        {
            if (!_chunks.TryGetValue(TopicCheckpointCodec.ChunkKey(_eventsTopic, manifest.Partition, manifest.Writer, manifest.Slot, i), out var held))
            {
                throw new InvalidDataException($"{where} is incomplete: chunk {i} of {manifest.Chunks} is missing");
            }
            CheckpointChunk chunk;
            try
            {
                chunk = TopicCheckpointCodec.ReadChunk(held.Value);
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
    /// One more than the highest chunk index <paramref name="writer"/> holds in
    /// <paramref name="slot"/> of <paramref name="partition"/> (0 when none): how far the
    /// writer's next checkpoint in that slot must delete leftovers of a longer one.
    /// </summary>
    public int SlotExtent(int partition, string writer, int slot)
    {
        int extent = 0;
        foreach (var (key, held) in _chunks)
        {
            // The key ends in <slot>/<index>, whichever layout it is of.
            var parts = key.Split('/');
            if (held.Partition == partition && held.Writer == writer && parts[^2] == slot.ToString(CultureInfo.InvariantCulture)
                && int.TryParse(parts[^1], NumberStyles.None, CultureInfo.InvariantCulture, out int index))
            {
                extent = Math.Max(extent, index + 1);
            }
        }
        return extent;
    }

    /// <summary>
    /// The keys of <paramref name="partition"/> held by writers other than
    /// <paramref name="writer"/> (the layout before per-writer keys included): their manifests
    /// and, apart, their chunks, each in key order, for the new owner to delete.
    /// </summary>
    public (List<string> Manifests, List<string> Chunks) KeysOfOthers(int partition, string writer)
    {
        var manifests = _manifests.Keys.Where(k => k.Partition == partition && k.Writer != writer)
            .Select(k => TopicCheckpointCodec.ManifestKey(_eventsTopic, partition, k.Writer)).Order(StringComparer.Ordinal).ToList();
        var chunks = _chunks.Where(c => c.Value.Partition == partition && c.Value.Writer != writer).Select(c => c.Key).Order(StringComparer.Ordinal).ToList();
        return (manifests, chunks);
    }

    private string Describe(int partition) => $"the checkpoint of {_eventsTopic} partition {partition} on topic '{_source}'";
}
