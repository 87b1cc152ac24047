using System.Diagnostics;
using System.Runtime.CompilerServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// Predictions waiting for late labels, bounded by count and by age. Each is one encoded
/// record (<see cref="PendingRecord"/>) in a byte arena kept in arrival order
/// (<see cref="RecordArena"/>), found by id through a table of four-byte locations
/// (<see cref="PendingIndex"/>): no object per prediction, and on the wide stream about 90
/// bytes each with eleven features. When the store is full the oldest record is freed, and a
/// prediction older than the age limit (by event time) is dropped; either way an unlabelled
/// prediction leaving the store counts as expired. Graded records stay until freed so a second
/// label for the same id is recognised as a duplicate. O(1) per operation; the arena reuses its
/// chunks, so memory follows the records held and stays flat on an endless stream.
/// </summary>
internal sealed class PendingLabelStore
{
    private readonly RecordArena _arena = new();
    private readonly PendingIndex _byId;
    private readonly PendingPrediction _joined = new();
    private readonly int _capacity;
    private readonly long _maxAgeTicks;
    private byte[] _key = new byte[64];
    private int _count;

    /// <summary>Creates a store holding at most <paramref name="capacity"/> predictions for at most <paramref name="maxAge"/> of event time.</summary>
    public PendingLabelStore(int capacity, TimeSpan maxAge)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(maxAge, TimeSpan.Zero);
        _capacity = capacity;
        _byId = new PendingIndex(_arena, capacity);
        _maxAgeTicks = maxAge.Ticks;
    }

    /// <summary>Entries held, graded or not.</summary>
    public int Count => _count;

    /// <summary>Predictions that left the store without a label.</summary>
    public long Expired { get; private set; }

    /// <summary>Predictions still waiting for a label.</summary>
    public int Waiting { get; private set; }

    /// <summary>
    /// Stores a prediction: the model that made it, its probabilities (one for a binary model,
    /// K for a multiclass one) and the prior's, the served probabilities (none, one for a
    /// binary model, K for a multiclass one), the segment and the features. A second prediction with an id already held takes
    /// the id over.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Add(string id, long timeTicks, int model, ReadOnlySpan<double> p, ReadOnlySpan<double> priorP, ReadOnlySpan<double> served, string? segment, ReadOnlySpan<int> slots, ReadOnlySpan<double> values)
    {
        Debug.Assert(p.Length == priorP.Length && slots.Length == values.Length, "matching lengths");
        if (_count == _capacity)
        {
            Evict();
        }
        int keyLength = IdKey.Encode(id, ref _key);
        int size = PendingRecord.Size(keyLength, timeTicks, model, p, served, segment, slots, values);
        uint location;
        Span<byte> bytes;
        while ((location = _arena.TryReserve(size, out bytes)) == RecordArena.NoSpace)
        {
            // Some 4 GB held: make room as a full store does, oldest first.
            Evict();
        }
        var key = _key.AsSpan(0, keyLength);
        PendingRecord.Write(bytes, key, timeTicks, model, p, priorP, served, segment, slots, values);
        uint previous = _byId.Set(key, IdKey.Hash(key), location);
        if (previous != PendingIndex.None)
        {
            var earlier = _arena.At(previous);
            if (!PendingRecord.IsLabelled(earlier))
            {
                // The earlier prediction can no longer be graded: its id now names this one.
                Waiting--;
                Expired++;
                PendingRecord.MarkLabelled(earlier);
            }
        }
        _count++;
        Waiting++;
    }

    /// <summary>True when a prediction with <paramref name="id"/> is held and not yet graded.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public bool IsWaiting(string id)
    {
        if (_count == 0)
        {
            return false;
        }
        uint location = Find(id);
        return location != PendingIndex.None && !PendingRecord.IsLabelled(_arena.At(location));
    }

    /// <summary>
    /// Finds the pending prediction for <paramref name="id"/> and marks it graded. The
    /// prediction handed back is the store's one decoding buffer: valid until the next call.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public LabelJoin TryJoin(string id, out PendingPrediction? prediction)
    {
        prediction = null;
        uint location = _count == 0 ? PendingIndex.None : Find(id);
        if (location == PendingIndex.None)
        {
            return LabelJoin.UnknownId;
        }
        var record = _arena.At(location);
        if (PendingRecord.IsLabelled(record))
        {
            return LabelJoin.Duplicate;
        }
        PendingRecord.MarkLabelled(record);
        Waiting--;
        PendingRecord.Read(record, _joined, withId: false);
        prediction = _joined;
        return LabelJoin.Joined;
    }

    /// <summary>Drops predictions older than the age limit relative to <paramref name="nowTicks"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void ExpireBefore(long nowTicks)
    {
        while (_count > 0)
        {
            long time = PendingRecord.TimeOf(_arena.At(_arena.Tail));
            if (time == Events.ParsedRecord.NoTime || nowTicks - time <= _maxAgeTicks)
            {
                return;
            }
            Evict();
        }
    }

    /// <summary>
    /// Entries in arrival order, oldest first, each decoded afresh with its id (for snapshots);
    /// with <paramref name="into"/>, each is decoded into that one instance instead, valid only
    /// until the next one is taken (for a caller that copies every entry out at once).
    /// </summary>
    public IEnumerable<PendingPrediction> Entries(PendingPrediction? into = null)
    {
        if (_count == 0)
        {
            yield break;
        }
        uint location = _arena.Tail;
        for (int i = 0; i < _count; i++)
        {
            var entry = into ?? new PendingPrediction();
            int size = PendingRecord.Read(_arena.At(location), entry, withId: true);
            yield return entry;
            location = _arena.After(location, size);
        }
    }

    /// <summary>Copies the entries' records, oldest first, into <paramref name="buffer"/> (<see cref="RecordArena.CopyLive"/>); returns their length in bytes.</summary>
    public int CopyRecords(ref byte[] buffer) => _arena.CopyLive(ref buffer);

    /// <summary>Restores the counters of a snapshot (entries are re-added with <see cref="Add"/>).</summary>
    public void RestoreCounters(long expired) => Expired = expired;

    private uint Find(string id)
    {
        int keyLength = IdKey.Encode(id, ref _key);
        var key = _key.AsSpan(0, keyLength);
        return _byId.Find(key, IdKey.Hash(key));
    }

    private void Evict()
    {
        Debug.Assert(_count > 0, "evicting from an empty store");
        uint location = _arena.Tail;
        var record = _arena.At(location);
        if (!PendingRecord.IsLabelled(record))
        {
            Waiting--;
            Expired++;
        }
        // The id leaves with its record, unless a later prediction has taken the id over.
        var key = record[..IdKey.Length(record)];
        _byId.Remove(IdKey.Hash(key), location);
        _arena.FreeTail(PendingRecord.Length(record));
        _count--;
    }
}
