using System.Text;
using Driftline.Core.Events;
using Driftline.Core.Features;
using Xunit;

namespace Driftline.Core.Tests.Features;

public sealed class FeatureNamesTests
{
    [Fact]
    public void TryParse_WithNames_RecordsNameValueAndNumericNames()
    {
        var names = new FeatureNames();
        var parser = new EventParser { Names = names };
        var record = new ParsedRecord();

        Assert.True(parser.TryParse("""{"id":"a","features":{"zone":"riverside","km":3.4,"rain":true,"tags":["x","y"]}}"""u8, record, out _));

        ulong zone = FeatureHash.Name("zone"u8);
        Assert.Equal("zone=riverside", names.Find(FeatureHash.Value(zone, "riverside"u8)));
        Assert.Equal("km", names.Find(FeatureHash.Name("km"u8)));
        Assert.Equal("rain", names.Find(FeatureHash.Name("rain"u8)));
        Assert.Equal("tags=y", names.Find(FeatureHash.Value(FeatureHash.Name("tags"u8), "y"u8)));
        Assert.Equal("(bias)", names.Find(FeatureHash.Bias));
    }

    [Fact]
    public void TryParse_EscapedValue_RecordsUnescapedText()
    {
        var names = new FeatureNames();
        var parser = new EventParser { Names = names };

        Assert.True(parser.TryParse("""{"id":"a","features":{"zone":"caf\u00e9"}}"""u8, new ParsedRecord(), out _));

        Assert.Equal("zone=café", names.Find(FeatureHash.Value(FeatureHash.Name("zone"u8), Encoding.UTF8.GetBytes("café"))));
    }

    [Fact]
    public void RecordValue_BeyondCapacity_KeepsTheFirstAndCountsTheRest()
    {
        var names = new FeatureNames(capacity: 3);

        for (ulong h = 1; h <= 5; h++)
        {
            names.RecordValue(h, "n"u8, Encoding.UTF8.GetBytes(h.ToString(System.Globalization.CultureInfo.InvariantCulture)));
        }

        Assert.Equal(3, names.Count);
        Assert.Equal("n=1", names.Find(1));
        Assert.Equal("n=2", names.Find(2));
        Assert.Null(names.Find(3));
        Assert.Equal(3, names.Dropped);
    }

    [Fact]
    public void RecordValue_ManyHashesSharingBuckets_KeepsExactlyTheFirstDistinctOnes()
    {
        // The definition (the class summary): the first `capacity` distinct hashes are kept,
        // the bias among them, and each later one is dropped, counted at least once and at
        // most once a call. Hashes drawn so that many share the bits of the presence filter
        // and of the cache but differ elsewhere, with repeats on both sides of the limit.
        const int capacity = 500;
        var names = new FeatureNames(capacity);
        var kept = new HashSet<ulong> { FeatureHash.Bias };
        var dropped = new HashSet<ulong>();
        long droppedCalls = 0;
        var random = new Random(5);
        var pool = new List<ulong>();
        for (int n = 0; n < 3_000; n++)
        {
            ulong shared = (ulong)random.Next(64) << 24;
            pool.Add(((ulong)random.NextInt64() & ~(0xFFFFFUL << 24)) | shared);
        }
        for (int n = 0; n < 20_000; n++)
        {
            ulong hash = pool[random.Next(pool.Count)];
            names.RecordValue(hash, "n"u8, Encoding.UTF8.GetBytes(hash.ToString(System.Globalization.CultureInfo.InvariantCulture)));
            if (kept.Contains(hash) || (kept.Count < capacity && kept.Add(hash)))
            {
                continue;
            }
            dropped.Add(hash);
            droppedCalls++;
        }

        Assert.Equal(kept.Count, names.Count);
        foreach (ulong hash in pool)
        {
            Assert.Equal(kept.Contains(hash) ? "n=" + hash.ToString(System.Globalization.CultureInfo.InvariantCulture) : null, names.Find(hash));
        }
        Assert.InRange(names.Dropped, dropped.Count, droppedCalls);
    }

    [Fact]
    public void TryParse_KnownVocabulary_AllocatesNoMoreThanWithoutNames()
    {
        var line = """{"id":"a","features":{"zone":"riverside","km":3.4,"tags":["x"]}}"""u8.ToArray();
        var record = new ParsedRecord();
        var plain = new EventParser();
        var named = new EventParser { Names = new FeatureNames() };
        plain.TryParse(line, record, out _);
        named.TryParse(line, record, out _);

        long before = GC.GetAllocatedBytesForCurrentThread();
        plain.TryParse(line, record, out _);
        long plainBytes = GC.GetAllocatedBytesForCurrentThread() - before;
        before = GC.GetAllocatedBytesForCurrentThread();
        named.TryParse(line, record, out _);
        long namedBytes = GC.GetAllocatedBytesForCurrentThread() - before;

        // Once the names are known, recording costs lookups only (the id string is the record's own allocation).
        Assert.Equal(plainBytes, namedBytes);
    }

    [Fact]
    public void Restore_SavedEntries_FindsTheSameNames()
    {
        var names = new FeatureNames();
        names.RecordName(42, "km"u8);

        var restored = FeatureNames.Restore(names.Entries);

        Assert.Equal("km", restored.Find(42));
        Assert.Equal(names.Count, restored.Count);
    }
}
