using Driftline.Core.Events;
using Driftline.Core.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

public sealed class PendingLabelStoreTests
{
    private static void Add(PendingLabelStore store, string id, long time = ParsedRecord.NoTime, double p = 0.5, int[]? slots = null, double[]? values = null)
    {
        double prior = 0.25;
        store.Add(id, time, 0, new ReadOnlySpan<double>(in p), new ReadOnlySpan<double>(in prior), [], null, slots ?? [], values ?? []);
    }

    [Fact]
    public void TryJoin_PendingId_JoinsOnceThenReportsDuplicate()
    {
        var store = new PendingLabelStore(4, TimeSpan.FromDays(1));
        Add(store, "a", p: 0.3);
        Assert.Equal(LabelJoin.Joined, store.TryJoin("a", out var p));
        Assert.Equal(0.3, p!.P);
        Assert.Equal(LabelJoin.Duplicate, store.TryJoin("a", out _));
        Assert.Equal(LabelJoin.UnknownId, store.TryJoin("b", out _));
        Assert.Equal(0, store.Waiting);
    }

    [Fact]
    public void Add_FewAndManyFeatures_ComeBackAsStoredWhileNeighboursChange()
    {
        // Records of different lengths sit side by side in the arena; none may disturb the one
        // beside it, including when the oldest is freed and its room reused.
        var store = new PendingLabelStore(3, TimeSpan.FromDays(1));
        int[] few = [3, 1, 4];
        int[] many = Enumerable.Range(100, 40).ToArray();
        Add(store, "few", slots: few, values: few.Select(i => i / 10.0).ToArray());
        Add(store, "many", slots: many, values: many.Select(i => i % 3 == 0 ? -1.0 : -i / 10.0).ToArray());
        Add(store, "empty");
        Add(store, "recycled", slots: many[..16], values: many[..16].Select(i => i * 2.0).ToArray());

        Assert.Equal(LabelJoin.Joined, store.TryJoin("many", out var m));
        Assert.Equal(many, m!.Slots.ToArray());
        Assert.Equal(many.Select(i => i % 3 == 0 ? -1.0 : -i / 10.0), m.Values.ToArray());
        Assert.Equal(LabelJoin.Joined, store.TryJoin("recycled", out var r));
        Assert.Equal(many[..16], r!.Slots.ToArray());
        Assert.Equal(many[..16].Select(i => i * 2.0), r.Values.ToArray());
        Assert.Equal(LabelJoin.Joined, store.TryJoin("empty", out var e));
        Assert.Equal(0, e!.Count);
        Assert.Equal(LabelJoin.UnknownId, store.TryJoin("few", out _));
    }

    [Fact]
    public void Add_BeyondCapacity_DropsOldestAndCountsItExpired()
    {
        var store = new PendingLabelStore(3, TimeSpan.FromDays(1));
        foreach (var id in new[] { "a", "b", "c", "d" })
        {
            Add(store, id);
        }
        Assert.Equal(1, store.Expired);
        Assert.Equal(3, store.Waiting);
        Assert.Equal(LabelJoin.UnknownId, store.TryJoin("a", out _));
        Assert.Equal(LabelJoin.Joined, store.TryJoin("b", out _));
    }

    [Fact]
    public void Add_BeyondCapacity_RecyclingAGradedEntryIsNotAnExpiry()
    {
        var store = new PendingLabelStore(2, TimeSpan.FromDays(1));
        Add(store, "a");
        store.TryJoin("a", out _);
        Add(store, "b");
        Add(store, "c");
        Assert.Equal(0, store.Expired);
    }

    [Fact]
    public void ExpireBefore_OlderThanMaxAge_DropsOnlyTheOld()
    {
        var t0 = new DateTime(2026, 1, 1, 0, 0, 0, DateTimeKind.Utc).Ticks;
        var store = new PendingLabelStore(10, TimeSpan.FromHours(1));
        Add(store, "old", t0);
        Add(store, "new", t0 + TimeSpan.FromMinutes(50).Ticks);
        store.ExpireBefore(t0 + TimeSpan.FromMinutes(61).Ticks);
        Assert.Equal(1, store.Expired);
        Assert.Equal(LabelJoin.UnknownId, store.TryJoin("old", out _));
        Assert.Equal(LabelJoin.Joined, store.TryJoin("new", out _));
    }

    [Fact]
    public void Add_SameIdWhilePending_TakesTheIdOverAndExpiresTheFirst()
    {
        var store = new PendingLabelStore(10, TimeSpan.FromDays(1));
        Add(store, "a", p: 0.1);
        Add(store, "a", p: 0.9);
        Assert.Equal(1, store.Expired);
        Assert.Equal(LabelJoin.Joined, store.TryJoin("a", out var p));
        Assert.Equal(0.9, p!.P);
        Assert.Equal(0, store.Waiting);
    }

    [Fact]
    public void Add_IdsThatAreNotValidUtf16_StayApart()
    {
        // A lone surrogate would become the same replacement character in UTF-8 for both ids;
        // the store keeps such ids as code units, so each finds only its own prediction.
        var store = new PendingLabelStore(10, TimeSpan.FromDays(1));
        Add(store, "x\uD800", p: 0.1);
        Add(store, "x\uD801", p: 0.2);
        Add(store, "x\uFFFD", p: 0.3);
        Assert.Equal(0, store.Expired);
        Assert.Equal(["x\uD800", "x\uD801", "x\uFFFD"], store.Entries().Select(e => e.Id));
        Assert.Equal(LabelJoin.Joined, store.TryJoin("x\uD801", out var p));
        Assert.Equal(0.2, p!.P);
    }

    [Fact]
    public void Add_RecordsLargerThanAChunk_GetOneOfTheirOwn()
    {
        // 20,000 features with values that are not ±1 take about 200 KB, several arena chunks.
        var store = new PendingLabelStore(4, TimeSpan.FromDays(1));
        int[] slots = Enumerable.Range(0, 20_000).ToArray();
        double[] values = slots.Select(i => i + 0.5).ToArray();
        Add(store, "small-1", slots: [1], values: [2.0]);
        Add(store, "huge", slots: slots, values: values);
        Add(store, "small-2", slots: [3], values: [-1.0]);
        Assert.Equal(LabelJoin.Joined, store.TryJoin("huge", out var h));
        Assert.Equal(slots, h!.Slots.ToArray());
        Assert.Equal(values, h.Values.ToArray());
        Assert.Equal(["small-1", "huge", "small-2"], store.Entries().Select(e => e.Id));
        Assert.Equal(LabelJoin.Joined, store.TryJoin("small-2", out var s));
        Assert.Equal(-1.0, s!.Values[0]);
    }
}
