using System.Text.Json;
using System.Text.Json.Serialization;
using Driftline.Core.Scoring;

namespace Driftline.Core.Snapshots;

/// <summary>
/// The ids of the latest events that came with their label, oldest first
/// (<see cref="EngineSnapshot.InlineLabelled"/>): a list, or the <see cref="RecentIds"/> keys
/// copied when the snapshot was taken (<see cref="CopiedList{TItem}"/>), written from their
/// bytes as the same array of strings. A partition remembers up to <c>Labels:MaxPending</c> of
/// them: as strings in a list they were the largest part of a checkpoint's survivors after the
/// pending entries.
/// </summary>
[JsonConverter(typeof(CopiedListConverter<RecentIdEntries, string>))]
internal sealed class RecentIdEntries : CopiedList<string>, ICopiedListOf<RecentIdEntries, string>
{
    /// <summary>Ids given as a list.</summary>
    public RecentIdEntries(List<string> list)
        : base(list)
    {
    }

    private RecentIdEntries(RecordCopy copy)
        : base(copy)
    {
    }

    /// <inheritdoc />
    public static RecentIdEntries Of(List<string> list) => new(list);

    /// <inheritdoc />
    public static string JsonName => "inline_labelled";

    /// <summary>Copies the keys <paramref name="ids"/> holds into the array <paramref name="pool"/> keeps.</summary>
    public static RecentIdEntries Copy(RecentIds ids, RecordCopyPool pool)
    {
        var records = pool.Take();
        int length = ids.CopyRecords(ref records);
        return new RecentIdEntries(new RecordCopy(records, length, ids.Count, pool));
    }

    /// <inheritdoc />
    protected override void WriteCopy(Utf8JsonWriter writer, ReadOnlySpan<byte> records, int count)
    {
        writer.WriteStartArray();
        int pos = 0;
        for (int i = 0; i < count; i++)
        {
            int length = IdKey.Length(records[pos..]);
            PendingJson.WriteKey(writer, records.Slice(pos, length));
            pos += length;
        }
        writer.WriteEndArray();
    }

    /// <inheritdoc />
    protected override List<string> Decode(ReadOnlySpan<byte> records, int count)
    {
        var list = new List<string>(count);
        int pos = 0;
        for (int i = 0; i < count; i++)
        {
            int length = IdKey.Length(records[pos..]);
            list.Add(IdKey.Decode(records.Slice(pos, length)));
            pos += length;
        }
        return list;
    }
}
