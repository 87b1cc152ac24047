using Driftline.Core.Events;
using Driftline.Core.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

public sealed class PendingLabelStoreTests
{
    [Fact]
    public void TryJoin_PendingId_JoinsOnceThenReportsDuplicate()
    {
        var store = new PendingLabelStore(4, TimeSpan.FromDays(1));
        store.Add("a", ParsedRecord.NoTime).P = 0.3;
        Assert.Equal(LabelJoin.Joined, store.TryJoin("a", out var p));
        Assert.Equal(0.3, p!.P);
        Assert.Equal(LabelJoin.Duplicate, store.TryJoin("a", out _));
        Assert.Equal(LabelJoin.UnknownId, store.TryJoin("b", out _));
        Assert.Equal(0, store.Waiting);
    }

    [Fact]
    public void SetFeatures_FewAndMany_ComeBackAsStoredWhileNeighboursChange()
    {
        // Entries share the store's feature arrays up to a stride; a longer event spills into
        // arrays of its own. Neither may disturb the entry beside it, including on reuse.
        var store = new PendingLabelStore(3, TimeSpan.FromDays(1));
        int[] few = [3, 1, 4];
        int[] many = Enumerable.Range(100, 40).ToArray();
        store.Add("few", ParsedRecord.NoTime).SetFeatures(few, few.Select(i => i / 10.0).ToArray());
        store.Add("many", ParsedRecord.NoTime).SetFeatures(many, many.Select(i => -i / 10.0).ToArray());
        store.Add("empty", ParsedRecord.NoTime).SetFeatures([], []);
        store.Add("recycled", ParsedRecord.NoTime).SetFeatures(many[..16], many[..16].Select(i => i * 2.0).ToArray());

        Assert.Equal(LabelJoin.Joined, store.TryJoin("many", out var m));
        Assert.Equal(many, m!.Slots.ToArray());
        Assert.Equal(many.Select(i => -i / 10.0), m.Values.ToArray());
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
            store.Add(id, ParsedRecord.NoTime);
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
        store.Add("a", ParsedRecord.NoTime);
        store.TryJoin("a", out _);
        store.Add("b", ParsedRecord.NoTime);
        store.Add("c", ParsedRecord.NoTime);
        Assert.Equal(0, store.Expired);
    }

    [Fact]
    public void ExpireBefore_OlderThanMaxAge_DropsOnlyTheOld()
    {
        var t0 = new DateTime(2026, 1, 1, 0, 0, 0, DateTimeKind.Utc).Ticks;
        var store = new PendingLabelStore(10, TimeSpan.FromHours(1));
        store.Add("old", t0);
        store.Add("new", t0 + TimeSpan.FromMinutes(50).Ticks);
        store.ExpireBefore(t0 + TimeSpan.FromMinutes(61).Ticks);
        Assert.Equal(1, store.Expired);
        Assert.Equal(LabelJoin.UnknownId, store.TryJoin("old", out _));
        Assert.Equal(LabelJoin.Joined, store.TryJoin("new", out _));
    }

    [Fact]
    public void Add_SameIdWhilePending_TakesTheIdOverAndExpiresTheFirst()
    {
        var store = new PendingLabelStore(10, TimeSpan.FromDays(1));
        store.Add("a", ParsedRecord.NoTime).P = 0.1;
        store.Add("a", ParsedRecord.NoTime).P = 0.9;
        Assert.Equal(1, store.Expired);
        Assert.Equal(LabelJoin.Joined, store.TryJoin("a", out var p));
        Assert.Equal(0.9, p!.P);
        Assert.Equal(0, store.Waiting);
    }
}
