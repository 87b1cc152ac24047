using System.Globalization;
using Driftline.Core.Options;
using Driftline.Core.Recalibration;
using Driftline.Core.Scoring;
using Driftline.Core.Snapshots;
using Driftline.Core.Tests.Scoring;
using Xunit;

namespace Driftline.Core.Tests.SnapshotFormat;

/// <summary>
/// A snapshot's pending entries are a block copy of the store's records, written to JSON from the
/// copy. The reference here is the serializer's own output for the list of the same entries
/// (what every build before the copy wrote), so checkpoints and saved models keep their bytes.
/// </summary>
public sealed class PendingEntriesTests
{
    public static TheoryData<string> Kinds => ["binary", "served", "segments", "multiclass", "multiclass-served", "evicting"];

    [Theory]
    [MemberData(nameof(Kinds))]
    public void Write_CopiedRecords_SameBytesAsTheListOfTheSameEntries(string kind)
    {
        var engine = Fed(kind, events: 3_000);

        var copied = engine.Snapshot();
        var listed = engine.Snapshot();
        Assert.True(copied.PendingEntries!.IsCopy);
        Assert.True(copied.InlineLabelledEntries!.IsCopy);
        // Reading the lists makes them lists: then the serializer's metadata writes them, as before.
        Assert.Equal(engine.Pending.Count, listed.Pending.Count);
        Assert.Equal(engine.InlineLabelled.Count, listed.InlineLabelled!.Count);
        Assert.False(listed.PendingEntries!.IsCopy);
        Assert.False(listed.InlineLabelledEntries!.IsCopy);

        Assert.Equal(Json(listed), Json(copied));
        Assert.Contains(listed.Pending, p => p.Labelled);
        Assert.Contains(listed.Pending, p => !p.Labelled);
        // Each kind has the fields it is here for, so the comparison covers them.
        Assert.Equal(kind.EndsWith("served", StringComparison.Ordinal), listed.Pending.Any(p => p.Served is not null || p.ServedClassP is not null));
        Assert.Equal(kind == "segments", listed.Pending.Any(p => p.Segment is not null));
        Assert.Equal(kind.StartsWith("multiclass", StringComparison.Ordinal), listed.Pending.Any(p => p.ClassP is not null));
    }

    [Theory]
    [MemberData(nameof(Kinds))]
    public void Restore_FromCopiedSnapshot_WritesTheSameSnapshotAgain(string kind)
    {
        var engine = Fed(kind, events: 2_000);
        byte[] saved = Json(engine.Snapshot());

        var restored = ScoringEngine.Restore(SnapshotCodec.Read(new MemoryStream(saved)), new RecordingSink());

        Assert.Equal(saved, Json(restored.Snapshot()));
    }

    [Fact]
    public void Write_NoIdsRemembered_WritesEmptyArraysAsBefore()
    {
        var engine = new ScoringEngine(Options("binary"), new RecordingSink());
        var copied = engine.Snapshot();
        var listed = engine.Snapshot();
        _ = listed.Pending;
        _ = listed.InlineLabelled;

        byte[] json = Json(copied);

        Assert.Equal(Json(listed), json);
        string text = System.Text.Encoding.UTF8.GetString(json);
        Assert.Contains("\"pending\":[]", text, StringComparison.Ordinal);
        Assert.Contains("\"inline_labelled\":[]", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Snapshot_AfterRelease_ReusesNothingStillHeldAndReleasedEntriesRefuseUse()
    {
        var engine = Fed("binary", events: 2_000);
        var held = engine.Snapshot();
        byte[] heldJson = Json(held);
        var released = engine.Snapshot();
        _ = Json(released);
        released.ReleaseCopies();

        EngineDriver.Feed(engine, Lines("binary", 2_000, 500));
        // The next snapshot takes the released array: the one still held must not change.
        var next = engine.Snapshot();

        Assert.Equal(heldJson, Json(held));
        var reference = engine.Snapshot();
        _ = reference.Pending;
        Assert.Equal(Json(reference), Json(next));
        Assert.Throws<InvalidOperationException>(() => released.Pending);
        Assert.Throws<InvalidOperationException>(() => released.InlineLabelled);
    }

    private static byte[] Json(EngineSnapshot snapshot)
    {
        var stream = new MemoryStream();
        SnapshotCodec.Write(snapshot, stream);
        return stream.ToArray();
    }

    private static ScoringEngine Fed(string kind, int events)
    {
        var engine = new ScoringEngine(Options(kind), new RecordingSink());
        EngineDriver.Feed(engine, Lines(kind, 0, events));
        return engine;
    }

    private static DriftlineOptions Options(string kind)
    {
        var options = new DriftlineOptions();
        options.Model.HashBits = 12;
        if (kind.StartsWith("multiclass", StringComparison.Ordinal))
        {
            options.Model.Classes = [.. SoftmaxStream.Classes];
        }
        if (kind.EndsWith("served", StringComparison.Ordinal))
        {
            options.Recalibration.Mode = RecalibrationMode.Always;
        }
        if (kind == "segments")
        {
            options.Monitor.SegmentBy = "zone";
        }
        if (kind == "evicting")
        {
            // Evictions move the oldest record to the middle of a chunk, and the records span several 64 KB chunks.
            options.Labels.MaxPending = 1_100;
        }
        return options;
    }

    // Inline labels, late labels 40 events on and events never labelled; ids with characters
    // JSON escapes (and one outside the basic plane), keys that make several models, values that are not ±1.
    private static IEnumerable<string> Lines(string kind, int from, int count)
    {
        bool multiclass = kind.StartsWith("multiclass", StringComparison.Ordinal);
        string[] zones = ["north", "süd", "east \\\"x\\\"", "west"];
        string Label(int i) => multiclass ? $"\"{SoftmaxStream.Classes[i % SoftmaxStream.Classes.Length]}\"" : (i % 3 == 0 ? "1" : "0");
        for (int i = from; i < from + count; i++)
        {
            string inline = i % 4 == 0 ? ",\"label\":" + Label(i) : "";
            yield return string.Create(CultureInfo.InvariantCulture,
                $"{{\"id\":\"e{i}<é>{(i % 11 == 0 ? "\\uD83D\\uDE00" : "")}\",\"key\":\"k{i % 3}\",\"features\":{{\"zone\":\"{zones[i % 4]}\",\"distance_km\":{i % 97 / 7.0},\"items\":{i % 7},\"raining\":{(i % 3 == 0 ? "true" : "false")},\"tags\":[\"t{i % 5}\"]}}{inline}}}");
            int late = i - 40;
            if (late >= from && late % 4 == 1)
            {
                yield return $"{{\"id\":\"e{late}<é>{(late % 11 == 0 ? "\\uD83D\\uDE00" : "")}\",\"label\":{Label(late)}}}";
            }
        }
    }
}
