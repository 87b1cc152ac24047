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

    [Fact]
    public void Contains_AskedAfterRunsOfAdds_AgreesWithAPlainListOfTheLastN()
    {
        // Ids are filed in the table only when a question comes: runs of adds between two
        // questions, shorter and longer than the capacity, must answer as filing at each add
        // would. Reference: the definition (the last `capacity` ids added), as above.
        const int capacity = 40;
        var ids = new RecentIds(capacity);
        var window = new List<string>();
        var random = new Random(11);
        for (int round = 0; round < 2_000; round++)
        {
            int run = random.Next(3) switch { 0 => random.Next(1, 5), 1 => random.Next(5, capacity), _ => random.Next(capacity, 3 * capacity) };
            for (int n = 0; n < run; n++)
            {
                string id = $"o-{random.Next(90)}";
                ids.Add(id);
                window.Add(id);
                if (window.Count > capacity)
                {
                    window.RemoveAt(0);
                }
            }
            for (int q = random.Next(1, 4); q > 0; q--)
            {
                string probe = $"o-{random.Next(100)}";
                Assert.Equal(window.Contains(probe), ids.Contains(probe));
            }
            if (round % 100 == 0)
            {
                Assert.Equal(window, ids.Entries());
            }
        }
        Assert.Equal(window, ids.Entries());
    }
}
