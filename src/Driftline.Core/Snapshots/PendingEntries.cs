using System.Text.Json;
using System.Text.Json.Serialization;
using Driftline.Core.Scoring;

namespace Driftline.Core.Snapshots;

/// <summary>
/// The waiting and graded predictions of a snapshot, oldest first: a list, or the pending
/// store's records copied when the snapshot was taken (<see cref="CopiedList{TItem}"/>).
/// </summary>
[JsonConverter(typeof(CopiedListConverter<PendingEntries, PendingSnapshot>))]
internal sealed class PendingEntries : CopiedList<PendingSnapshot>, ICopiedListOf<PendingEntries, PendingSnapshot>
{
    private readonly int _outputs;

    /// <summary>Entries given as a list.</summary>
    public PendingEntries(List<PendingSnapshot> list)
        : base(list)
    {
    }

    private PendingEntries(RecordCopy copy, int outputs)
        : base(copy) => _outputs = outputs;

    /// <inheritdoc />
    public static PendingEntries Of(List<PendingSnapshot> list) => new(list);

    /// <inheritdoc />
    public static string JsonName => "pending";

    /// <summary>
    /// Copies <paramref name="store"/>'s records into the array <paramref name="pool"/> keeps
    /// (<paramref name="outputs"/>: 1 for a binary model, K for a multiclass one).
    /// </summary>
    public static PendingEntries Copy(PendingLabelStore store, int outputs, RecordCopyPool pool)
    {
        var records = pool.Take();
        int length = store.CopyRecords(ref records);
        return new PendingEntries(new RecordCopy(records, length, store.Count, pool), outputs);
    }

    /// <summary>The entry a snapshot holds for the decoded record <paramref name="e"/>.</summary>
    public static PendingSnapshot Entry(PendingPrediction e, int outputs) => new()
    {
        Id = e.Id!,
        Model = e.Model,
        TimeTicks = e.TimeTicks,
        // A graded entry is kept only to recognise a duplicate label: its probabilities and
        // features are spent, so the snapshot keeps just the id, its place and the flag.
        P = e.Labelled || outputs != 1 ? 0 : e.P,
        PriorP = e.Labelled || outputs != 1 ? 0 : e.PriorP,
        ClassP = e.Labelled || outputs == 1 ? null : e.ClassP.ToArray(),
        ClassPriorP = e.Labelled || outputs == 1 ? null : e.ClassPriorP.ToArray(),
        ServedClassP = e.Labelled || e.ServedClassP.IsEmpty ? null : e.ServedClassP.ToArray(),
        Served = e.Labelled || !double.IsFinite(e.Served) ? null : e.Served,
        Labelled = e.Labelled,
        Slots = e.Labelled ? null : e.Slots.ToArray(),
        Values = e.Labelled ? null : e.Values.ToArray(),
        Segment = e.Labelled ? null : e.Segment,
    };

    /// <summary>
    /// Writes the records as the JSON array the list of <see cref="Entry"/>
    /// each gives with the snapshot's serializer options, one record decoded at a time into one
    /// scratch instance, the id written from its key's bytes (<see cref="PendingJson"/>).
    /// </summary>
    protected override void WriteCopy(Utf8JsonWriter writer, ReadOnlySpan<byte> records, int count)
    {
        var e = new PendingPrediction();
        writer.WriteStartArray();
        int pos = 0;
        for (int i = 0; i < count; i++)
        {
            var record = records[pos..];
            int size = PendingRecord.Read(record, e, withId: false);
            PendingJson.Write(writer, record[..IdKey.Length(record)], e, _outputs);
            pos += size;
        }
        writer.WriteEndArray();
    }

    /// <inheritdoc />
    protected override List<PendingSnapshot> Decode(ReadOnlySpan<byte> records, int count)
    {
        var list = new List<PendingSnapshot>(count);
        var e = new PendingPrediction();
        int pos = 0;
        for (int i = 0; i < count; i++)
        {
            pos += PendingRecord.Read(records[pos..], e, withId: true);
            list.Add(Entry(e, _outputs));
        }
        return list;
    }
}
