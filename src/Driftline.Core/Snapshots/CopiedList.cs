using System.Text.Json;
using System.Text.Json.Serialization.Metadata;

namespace Driftline.Core.Snapshots;

/// <summary>
/// A part of a snapshot that is either a list (read from a file, or set by a caller) or a
/// store's records copied in one block when the snapshot was taken (<see cref="RecordCopy"/>).
/// The copy is written to JSON straight from its bytes, with exactly the bytes the list of the
/// same items gives, and becomes a list only when someone reads <see cref="List"/> (a restore,
/// a test). So a checkpoint keeps one array alive until it is written, not an object or three
/// an entry that the collector has to trace and copy (tests/Driftline.Kafka.Benchmarks README, part 2).
/// </summary>
internal abstract class CopiedList<TItem>
{
    private List<TItem>? _list;
    private readonly RecordCopy? _copy;

    /// <summary>Items given as a list.</summary>
    protected CopiedList(List<TItem> list) => _list = list;

    /// <summary>Items to decode from <paramref name="copy"/>.</summary>
    protected CopiedList(RecordCopy copy) => _copy = copy;

    /// <summary>True while the items are the copied records (not yet made a list).</summary>
    public bool IsCopy => _list is null;

    /// <summary>The items as a list, decoded from the copy on first use.</summary>
    public List<TItem> List => _list ??= Decode(_copy!.Records, _copy.Count);

    /// <summary>Gives the copy's array back to its engine; the items may not be used after unless already a list.</summary>
    public void Release() => _copy?.Release();

    /// <summary>Writes the items: a list through the serializer's metadata for it (the context's, so the options of a model file or a checkpoint apply), a copy with <see cref="WriteCopy"/>.</summary>
    public void Write(Utf8JsonWriter writer, JsonSerializerOptions options)
    {
        if (IsCopy)
        {
            WriteCopy(writer, _copy!.Records, _copy.Count);
        }
        else
        {
            JsonSerializer.Serialize(writer, List, ListInfo(options));
        }
    }

    /// <summary>Reads a list of items with the context's metadata for it.</summary>
    public static List<TItem> ReadList(ref Utf8JsonReader reader, JsonSerializerOptions options) =>
        JsonSerializer.Deserialize(ref reader, ListInfo(options)) ?? [];

    /// <summary>The <paramref name="count"/> items of <paramref name="records"/> as a list.</summary>
    protected abstract List<TItem> Decode(ReadOnlySpan<byte> records, int count);

    /// <summary>The <paramref name="count"/> items of <paramref name="records"/> as the JSON array the list of them gives.</summary>
    protected abstract void WriteCopy(Utf8JsonWriter writer, ReadOnlySpan<byte> records, int count);

    private static JsonTypeInfo<List<TItem>> ListInfo(JsonSerializerOptions options) =>
        (JsonTypeInfo<List<TItem>>)options.GetTypeInfo(typeof(List<TItem>));
}
