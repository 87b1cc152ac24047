using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// Predictions waiting for late labels, bounded by count and by age. A ring of reusable
/// slots in arrival order: when it is full the oldest slot is recycled, and a prediction
/// older than the age limit (by event time) is dropped; either way an unlabelled prediction
/// leaving the store counts as expired. Graded entries stay until recycled so a second label
/// for the same id is recognised as a duplicate. O(1) per operation, no allocation once
/// every slot has been used.
/// </summary>
internal sealed class PendingLabelStore
{
    // Features of up to this many per event are kept in the store's shared arrays (the demo's
    // events carry about a dozen); more spill into arrays of the entry's own.
    private const int FeatureStride = 16;

    // The shared arrays come in chunks of this many entries (12 MB), made when the ring first
    // reaches them, so memory follows the entries in use rather than the configured maximum.
    private const int ChunkEntries = 1 << 16;

    private readonly PendingPrediction?[] _ring;
    private readonly int[]?[] _featureSlots;
    private readonly double[]?[] _featureValues;
    private readonly PendingIndex _byId;
    private readonly long _maxAgeTicks;
    private int _oldest;
    private int _count;

    /// <summary>Creates a store holding at most <paramref name="capacity"/> predictions for at most <paramref name="maxAge"/> of event time.</summary>
    public PendingLabelStore(int capacity, TimeSpan maxAge)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(maxAge, TimeSpan.Zero);
        _ring = new PendingPrediction[capacity];
        int chunks = (capacity + ChunkEntries - 1) / ChunkEntries;
        _featureSlots = new int[chunks][];
        _featureValues = new double[chunks][];
        _byId = new PendingIndex(_ring);
        _maxAgeTicks = maxAge.Ticks;
    }

    /// <summary>Entries held, graded or not.</summary>
    public int Count => _count;

    /// <summary>Predictions that left the store without a label.</summary>
    public long Expired { get; private set; }

    /// <summary>Predictions still waiting for a label.</summary>
    public int Waiting { get; private set; }

    /// <summary>
    /// Stores a prediction and returns its slot for the caller to fill (features and
    /// probabilities). A second prediction with an id already held takes the id over.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public PendingPrediction Add(string id, long timeTicks)
    {
        if (_count == _ring.Length)
        {
            Evict();
        }
        int index = (_oldest + _count) % _ring.Length;
        var slot = _ring[index] ??= NewEntry(index);
        int hash = PendingIndex.Hash(id);
        slot.Id = id;
        slot.IdHash = hash;
        int previous = _byId.Set(id, hash, index);
        if (previous >= 0 && !_ring[previous]!.Labelled)
        {
            // The earlier prediction can no longer be graded: its id now names this one.
            Waiting--;
            Expired++;
            _ring[previous]!.Labelled = true;
        }
        slot.TimeTicks = timeTicks;
        slot.Labelled = false;
        _count++;
        Waiting++;
        return slot;
    }

    /// <summary>True when a prediction with <paramref name="id"/> is held and not yet graded.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public bool IsWaiting(string id)
    {
        int index = _byId.Find(id, PendingIndex.Hash(id));
        return index >= 0 && !_ring[index]!.Labelled;
    }

    /// <summary>Finds the pending prediction for <paramref name="id"/> and marks it graded.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public LabelJoin TryJoin(string id, out PendingPrediction? prediction)
    {
        prediction = null;
        int index = _byId.Find(id, PendingIndex.Hash(id));
        if (index < 0)
        {
            return LabelJoin.UnknownId;
        }
        var slot = _ring[index]!;
        if (slot.Labelled)
        {
            return LabelJoin.Duplicate;
        }
        slot.Labelled = true;
        Waiting--;
        prediction = slot;
        return LabelJoin.Joined;
    }

    /// <summary>Drops predictions older than the age limit relative to <paramref name="nowTicks"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void ExpireBefore(long nowTicks)
    {
        while (_count > 0)
        {
            var oldest = _ring[_oldest]!;
            if (oldest.TimeTicks == Events.ParsedRecord.NoTime || nowTicks - oldest.TimeTicks <= _maxAgeTicks)
            {
                return;
            }
            Evict();
        }
    }

    /// <summary>Entries in arrival order, oldest first (for snapshots).</summary>
    public IEnumerable<PendingPrediction> Entries()
    {
        for (int i = 0; i < _count; i++)
        {
            yield return _ring[(_oldest + i) % _ring.Length]!;
        }
    }

    /// <summary>Restores the counters of a snapshot (entries are re-added with <see cref="Add"/>).</summary>
    public void RestoreCounters(long expired) => Expired = expired;

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private PendingPrediction NewEntry(int index)
    {
        int chunk = index / ChunkEntries;
        // Uninitialised: an entry writes its features before they are read, and pages are
        // touched only as entries are used.
        var slots = _featureSlots[chunk] ??= GC.AllocateUninitializedArray<int>(ChunkEntries * FeatureStride);
        var values = _featureValues[chunk] ??= GC.AllocateUninitializedArray<double>(ChunkEntries * FeatureStride);
        return new PendingPrediction(slots, values, index % ChunkEntries * FeatureStride, FeatureStride);
    }

    private void Evict()
    {
        Debug.Assert(_count > 0, "evicting from an empty store");
        var slot = _ring[_oldest]!;
        if (!slot.Labelled)
        {
            Waiting--;
            Expired++;
        }
        // The id leaves with its slot, unless a later prediction has taken the id over.
        _byId.Remove(slot.IdHash, _oldest);
        slot.Id = null;
        _oldest = (_oldest + 1) % _ring.Length;
        _count--;
    }
}
