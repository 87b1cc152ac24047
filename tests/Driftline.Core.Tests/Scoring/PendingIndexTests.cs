using CsCheck;
using Driftline.Core.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Scoring;

/// <summary>
/// The pending-label index against the BCL's <see cref="Dictionary{TKey, TValue}"/> as the
/// reference: any sequence of files, finds and removals gives the same answers. Hashes are
/// chosen by the test from a handful of values, so probe runs collide, wrap around the end
/// of the table and are shifted back on removal.
/// </summary>
public sealed class PendingIndexTests
{
    private const int RingLength = 8; // a table of 16 entries

    private static readonly Gen<(int Op, int Id, int Slot)[]> Operations =
        Gen.Select(Gen.Int[0, 2], Gen.Int[0, 11], Gen.Int[0, RingLength - 1]).Array[1, 200];

    [Fact]
    public void Operations_AnySequence_AgreeWithADictionary()
    {
        Operations.Sample(operations =>
        {
            var ring = new PendingPrediction?[RingLength];
            var index = new PendingIndex(ring);
            var reference = new Dictionary<string, int>(StringComparer.Ordinal);
            // Eleven ids over three hash values (one near the end of the table, to wrap).
            static int HashOf(string id) => int.Parse(id.AsSpan(3)) % 3 * 7 + 1;

            foreach (var (op, idNumber, slot) in operations)
            {
                string id = $"id-{idNumber}";
                switch (op)
                {
                    case 0 when ring[slot]?.Id is null:
                        // File an id under a free slot, as the store does with a new prediction.
                        ring[slot] = new PendingPrediction { Id = id };
                        int previous = index.Set(id, HashOf(id), slot);
                        Assert.Equal(reference.TryGetValue(id, out int had) ? had : -1, previous);
                        if (previous >= 0)
                        {
                            // The earlier slot keeps its id text but no longer owns it.
                            Assert.NotEqual(slot, previous);
                        }
                        reference[id] = slot;
                        break;
                    case 1 when ring[slot]?.Id is { } held:
                        // Free a slot, as an eviction does.
                        index.Remove(HashOf(held), slot);
                        if (reference.TryGetValue(held, out int owner) && owner == slot)
                        {
                            reference.Remove(held);
                        }
                        ring[slot] = null;
                        break;
                    default:
                        Assert.Equal(reference.TryGetValue(id, out int at) ? at : -1, index.Find(id, HashOf(id)));
                        break;
                }
            }
            foreach (var (id, slot) in reference)
            {
                Assert.Equal(slot, index.Find(id, HashOf(id)));
            }
        });
    }
}
