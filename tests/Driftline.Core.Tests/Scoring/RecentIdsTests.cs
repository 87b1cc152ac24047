using Driftline.Core.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

public sealed class RecentIdsTests
{
    [Fact]
    public void Add_BeyondCapacity_ForgetsTheOldestOnly()
    {
        var ids = new RecentIds(3);
        foreach (var id in new[] { "a", "b", "c", "d" })
        {
            ids.Add(id);
        }
        Assert.False(ids.Contains("a"));
        Assert.True(ids.Contains("b") && ids.Contains("c") && ids.Contains("d"));
        Assert.Equal(["b", "c", "d"], ids.Entries());
        Assert.Equal(3, ids.Count);
    }

    [Fact]
    public void Add_SameIdTwice_IsHeldUntilItsLastCopyLeaves()
    {
        var ids = new RecentIds(3);
        foreach (var id in new[] { "a", "b", "a", "c" })
        {
            ids.Add(id);
        }
        // The first "a" left with the fourth add; the second copy is still held.
        Assert.True(ids.Contains("a"));
        ids.Add("d");
        ids.Add("e");
        Assert.False(ids.Contains("a"));
        Assert.Equal(["c", "d", "e"], ids.Entries());
    }
}
