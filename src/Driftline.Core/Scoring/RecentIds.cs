using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// The ids of the most recent events that came with their own label, at most a fixed number,
/// oldest forgotten first. A late label for one of them is a second label (a duplicate), not a
/// label for an unknown id. Kept apart from the pending store so these ids never take the
/// places of predictions still waiting for a label. O(1) per operation.
/// </summary>
internal sealed class RecentIds
{
    private readonly string?[] _ring;
    // How many times each id is in the ring (an id may come back after it was graded).
    private readonly Dictionary<string, int> _count = new(StringComparer.Ordinal);
    private int _next;
    private int _held;

    /// <summary>Creates a memory of at most <paramref name="capacity"/> ids.</summary>
    public RecentIds(int capacity)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 1);
        _ring = new string?[capacity];
    }

    /// <summary>Ids held.</summary>
    public int Count => _held;

    /// <summary>Remembers <paramref name="id"/>, forgetting the oldest when full.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Add(string id)
    {
        if (_ring[_next] is { } oldest)
        {
            ref int n = ref CollectionsMarshal.GetValueRefOrNullRef(_count, oldest);
            if (--n == 0)
            {
                _count.Remove(oldest);
            }
            _held--;
        }
        _ring[_next] = id;
        CollectionsMarshal.GetValueRefOrAddDefault(_count, id, out _)++;
        _held++;
        _next = (_next + 1) % _ring.Length;
    }

    /// <summary>True when <paramref name="id"/> is among the ids held.</summary>
    public bool Contains(string id) => _count.ContainsKey(id);

    /// <summary>The ids held, oldest first (for snapshots).</summary>
    public IEnumerable<string> Entries()
    {
        for (int i = 0; i < _ring.Length; i++)
        {
            if (_ring[(_next + i) % _ring.Length] is { } id)
            {
                yield return id;
            }
        }
    }
}
