using System.Text.Json;
using System.Text.Json.Serialization;
using Driftline.Core.Scoring;

namespace Driftline.Core.Snapshots;

/// <summary>
/// The ids of the latest events that came with their label, oldest first
/// (<see cref="EngineSnapshot.InlineLabelled"/>): either a list (read from a file, or set by a
/// caller) or the <see cref="RecentIds"/> keys copied in one block when the snapshot was taken,
/// written to JSON from their bytes as the same array of strings, and made a list only when
/// someone reads <see cref="List"/>. A partition remembers up to <c>Labels:MaxPending</c> of
/// them: as strings in a list they were the largest part of a checkpoint's survivors after the
/// pending entries.
/// </summary>
[JsonConverter(typeof(RecentIdEntriesConverter))]
internal sealed class RecentIdEntries
{
    private List<string>? _list;
    private readonly RecordCopy? _copy;

    /// <summary>Ids given as a list.</summary>
    public RecentIdEntries(List<string> list) => _list = list;

    private RecentIdEntries(RecordCopy copy) => _copy = copy;

    /// <summary>Copies the keys <paramref name="ids"/> holds into the array <paramref name="pool"/> keeps.</summary>
    public static RecentIdEntries Copy(RecentIds ids, RecordCopyPool pool)
    {
        var records = pool.Take();
        int length = ids.CopyRecords(ref records);
        return new RecentIdEntries(new RecordCopy(records, length, ids.Count, pool));
    }

    /// <summary>True while the ids are the copied keys (not yet made a list).</summary>
    public bool IsCopy => _list is null;

    /// <summary>The ids as a list, decoded from the copy on first use.</summary>
    public List<string> List => _list ??= Decode();

    /// <summary>Gives the copy's array back to its engine; the ids may not be used after.</summary>
    public void Release() => _copy?.Release();

    /// <summary>Writes the copied keys as a JSON array of strings.</summary>
    public void WriteCopy(Utf8JsonWriter writer)
    {
        var keys = _copy!.Records;
        writer.WriteStartArray();
        int pos = 0;
        for (int i = 0; i < _copy.Count; i++)
        {
            int length = IdKey.Length(keys[pos..]);
            PendingJson.WriteKey(writer, keys.Slice(pos, length));
            pos += length;
        }
        writer.WriteEndArray();
    }

    private List<string> Decode()
    {
        var keys = _copy!.Records;
        var list = new List<string>(_copy.Count);
        int pos = 0;
        for (int i = 0; i < _copy.Count; i++)
        {
            int length = IdKey.Length(keys[pos..]);
            list.Add(IdKey.Decode(keys.Slice(pos, length)));
            pos += length;
        }
        return list;
    }
}
