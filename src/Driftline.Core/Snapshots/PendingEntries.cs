using System.Text.Json;
using System.Text.Json.Serialization;
using Driftline.Core.Scoring;

namespace Driftline.Core.Snapshots;

/// <summary>
/// The waiting and graded predictions of a snapshot, oldest first: either a list of entries
/// (read from a file, or set by a caller) or the pending store's records copied in one block
/// when the snapshot was taken. The copy is written to JSON straight from its bytes
/// (<see cref="PendingEntriesConverter"/>), with exactly the bytes the list of the same entries
/// gives, and becomes a list only when someone reads <see cref="List"/> (a restore, a test).
/// So a checkpoint keeps one array alive until it is written, not three objects an entry that
/// the collector has to trace and copy (tests/Driftline.Kafka.Benchmarks README, part 2).
/// </summary>
[JsonConverter(typeof(PendingEntriesConverter))]
internal sealed class PendingEntries
{
    private List<PendingSnapshot>? _list;
    private readonly RecordCopy? _copy;
    private readonly int _outputs;

    /// <summary>Entries given as a list.</summary>
    public PendingEntries(List<PendingSnapshot> list) => _list = list;

    private PendingEntries(RecordCopy copy, int outputs)
    {
        _copy = copy;
        _outputs = outputs;
    }

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

    /// <summary>True while the entries are the copied records (not yet made a list).</summary>
    public bool IsCopy => _list is null;

    /// <summary>The entries as a list, decoded from the copy on first use.</summary>
    public List<PendingSnapshot> List => _list ??= Decode();

    /// <summary>Gives the copy's array back to its engine; the entries may not be used after.</summary>
    public void Release() => _copy?.Release();

    /// <summary>The entry a snapshot holds for the decoded record <paramref name="e"/>.</summary>
    public static PendingSnapshot Of(PendingPrediction e, int outputs) => new()
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
    /// Writes the copied records as the JSON array the list of <see cref="Of"/> each gives with
    /// the snapshot's serializer options (snake-case names, named floating-point literals, a
    /// left-out p and prior_p when 0 and left-out nulls but for served), one record decoded at a
    /// time into one scratch instance.
    /// </summary>
    public void WriteCopy(Utf8JsonWriter writer)
    {
        var records = _copy!.Records;
        var e = new PendingPrediction();
        writer.WriteStartArray();
        int pos = 0;
        for (int i = 0; i < _copy.Count; i++)
        {
            var record = records[pos..];
            // The id is written from its key's bytes: no string an entry on the writer thread either.
            int size = PendingRecord.Read(record, e, withId: false);
            PendingJson.Write(writer, record[..IdKey.Length(record)], e, _outputs);
            pos += size;
        }
        writer.WriteEndArray();
    }

    private List<PendingSnapshot> Decode()
    {
        var records = _copy!.Records;
        var list = new List<PendingSnapshot>(_copy.Count);
        var e = new PendingPrediction();
        int pos = 0;
        for (int i = 0; i < _copy.Count; i++)
        {
            pos += PendingRecord.Read(records[pos..], e, withId: true);
            list.Add(Of(e, _outputs));
        }
        return list;
    }
}
