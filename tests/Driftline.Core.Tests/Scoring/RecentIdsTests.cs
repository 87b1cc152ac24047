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

    [Fact]
    public void Add_ManyIdsWithRepeats_AgreesWithAPlainListOfTheLastN()
    {
        // The reference is the definition itself: an id is held when it is among the last
        // `capacity` ids added. Few distinct ids, so repeats, evictions of one copy of several,
        // and wrapped probe runs in the table all happen.
        const int capacity = 50;
        var ids = new RecentIds(capacity);
        var window = new List<string>();
        var random = new Random(3);
        for (int n = 0; n < 20_000; n++)
        {
            string id = $"o-{random.Next(120)}";
            ids.Add(id);
            window.Add(id);
            if (window.Count > capacity)
            {
                window.RemoveAt(0);
            }
            string probe = $"o-{random.Next(130)}";
            Assert.Equal(window.Contains(probe), ids.Contains(probe));
        }
        Assert.Equal(window, ids.Entries());
        Assert.Equal(capacity, ids.Count);
    }
}
