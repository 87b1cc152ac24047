using System.Text;

namespace Driftline.Core.Features;

/// <summary>
/// A bounded record of the text behind feature hashes, so a saved model can show
/// <c>zone=riverside</c> instead of a slot number. Keyed by the full 64-bit hash rather than a
/// slot, so the same record serves every <c>Model:HashBits</c> and two names that share a slot
/// are both kept (a reader of the model sees the collision instead of a wrong name).
/// </summary>
/// <remarks>
/// The first <see cref="Capacity"/> distinct hashes are kept, later ones are counted in
/// <see cref="Dropped"/>; the record never grows past that. A hash already known costs one
/// dictionary probe and allocates nothing, so the parser's hot path stays allocation-free
/// once the vocabulary has been seen. Not thread-safe: one parser writes it.
/// </remarks>
internal sealed class FeatureNames
{
    /// <summary>Default most hashes kept.</summary>
    public const int DefaultCapacity = 100_000;

    private readonly Dictionary<ulong, string> _names = new();

    // A direct-mapped cache of hashes known to be recorded: the parser asks about every
    // feature of every event, and one array read is far cheaper than a dictionary probe.
    private readonly ulong[] _seen = new ulong[1 << 16];

    // One bit per 2^20 buckets of hashes, set for every hash in the record: a clear bit means
    // "not recorded" without the dictionary probe. Once the record is full, a stream with
    // a million distinct values misses the cache above on most of them, and the probe was 2.5%
    // of a wide replay's samples (tests/Driftline.Benchmarks README).
    private readonly ulong[] _recorded = new ulong[(1 << 20) / 64];

    /// <summary>Creates an empty record holding at most <paramref name="capacity"/> names.</summary>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="capacity"/> is less than 1.</exception>
    public FeatureNames(int capacity = DefaultCapacity)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        Capacity = capacity;
        Add(FeatureHash.Bias, "(bias)");
    }

    /// <summary>Most names kept.</summary>
    public int Capacity { get; }

    /// <summary>Names kept.</summary>
    public int Count => _names.Count;

    /// <summary>
    /// Times a new name was not kept because the record was full: at least once for each such
    /// name, and at most once a call (a name seen again may count again).
    /// </summary>
    public long Dropped { get; private set; }

    /// <summary>Records a numeric or boolean feature: the hash is the name's own.</summary>
    public void RecordName(ulong hash, ReadOnlySpan<byte> utf8Name)
    {
        if (DroppedWhenFull(hash) || Seen(hash))
        {
            return;
        }
        bool known = MayBeRecorded(hash) && _names.ContainsKey(hash);
        if (!known && HasRoom())
        {
            Add(hash, Encoding.UTF8.GetString(utf8Name));
            known = true;
        }
        Remember(hash, known);
    }

    /// <summary>Records a categorical feature as <c>name=value</c>.</summary>
    public void RecordValue(ulong hash, ReadOnlySpan<byte> utf8Name, ReadOnlySpan<byte> utf8Value)
    {
        if (DroppedWhenFull(hash) || Seen(hash))
        {
            return;
        }
        bool known = MayBeRecorded(hash) && _names.ContainsKey(hash);
        if (!known && HasRoom())
        {
            Add(hash, string.Concat(Encoding.UTF8.GetString(utf8Name), "=", Encoding.UTF8.GetString(utf8Value)));
            known = true;
        }
        Remember(hash, known);
    }

    private void Add(ulong hash, string text)
    {
        _names[hash] = text;
        int bit = (int)(hash >> 24) & ((1 << 20) - 1);
        _recorded[bit >> 6] |= 1UL << bit;
    }

    // Once the record is full, a hash whose presence bit is clear is not in it and never will
    // be: it is counted and answered from that bit alone, without the cache. On a stream with a
    // million distinct values nearly every such value missed the cache (a 512 KB table read at
    // random) and then overwrote an entry of it; the presence bits are a quarter of its size.
    private bool DroppedWhenFull(ulong hash)
    {
        if (_names.Count < Capacity || MayBeRecorded(hash))
        {
            return false;
        }
        Dropped++;
        return true;
    }

    private bool MayBeRecorded(ulong hash)
    {
        int bit = (int)(hash >> 24) & ((1 << 20) - 1);
        return (_recorded[bit >> 6] & (1UL << bit)) != 0;
    }

    // The top bits index the cache: the weight slot uses the low bits, so these spread independently.
    private bool Seen(ulong hash) => _seen[(int)(hash >> 48)] == hash;

    // Only hashes that are in the record (or that found it full) are cached, so a cache hit never hides a name.
    // `known` is the caller's one probe: on a high-cardinality stream most features miss the
    // cache once the record is full, and a second dictionary probe per miss was half the cost.
    private void Remember(ulong hash, bool known)
    {
        if (known || _names.Count >= Capacity)
        {
            _seen[(int)(hash >> 48)] = hash;
        }
    }

    /// <summary>The text recorded for <paramref name="hash"/>, or null.</summary>
    public string? Find(ulong hash) => _names.GetValueOrDefault(hash);

    /// <summary>Every (hash, text) pair, for a snapshot.</summary>
    public IEnumerable<KeyValuePair<ulong, string>> Entries => _names;

    /// <summary>Rebuilds a record from saved pairs.</summary>
    public static FeatureNames Restore(IEnumerable<KeyValuePair<ulong, string>> entries, int capacity = DefaultCapacity)
    {
        ArgumentNullException.ThrowIfNull(entries);
        var names = new FeatureNames(capacity);
        foreach (var (hash, text) in entries)
        {
            if (names.HasRoom())
            {
                names.Add(hash, text);
            }
        }
        return names;
    }

    // Checked before any text is built, so a full record allocates nothing either.
    private bool HasRoom()
    {
        if (_names.Count < Capacity)
        {
            return true;
        }
        Dropped++;
        return false;
    }
}
