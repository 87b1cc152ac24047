using CsCheck;
using Driftline.Core.Features;
using Driftline.Core.Learning;
using Driftline.Core.Options;
using Xunit;

namespace Driftline.Core.Tests.Learning;

/// <summary>
/// The learner's slot table against the BCL's <see cref="Dictionary{TKey, TValue}"/> as the
/// reference, and the learners' snapshots through it.
/// </summary>
public sealed class SlotTableTests
{
    [Fact]
    public void FindOrAdd_AnySequence_AgreesWithADictionaryAndNumbersSlotsInOrder()
    {
        // Slots from a narrow range (many repeats) and from the whole range a model can have
        // (2^30 slots at most), enough of them to make the table double several times.
        var slots = Gen.OneOf(Gen.Int[0, 300], Gen.Int[0, (1 << 30) - 1]).Array[1, 2_000];
        slots.Sample(sequence =>
        {
            var table = new SlotTable();
            var reference = new Dictionary<int, int>();
            foreach (int slot in sequence)
            {
                int capacity = table.Capacity;
                int at = table.FindOrAdd(slot, out bool grew);
                if (reference.TryGetValue(slot, out int known))
                {
                    Assert.Equal(known, at);
                    Assert.False(grew);
                }
                else
                {
                    Assert.Equal(reference.Count, at); // positions are handed out 0, 1, 2, …
                    reference.Add(slot, at);
                    Assert.Equal(capacity != table.Capacity, grew);
                }
                Assert.True(table.Capacity >= table.Count);
                Assert.Equal(slot, table.SlotAt(at));
            }
            Assert.Equal(reference.Count, table.Count);
            foreach (var (slot, at) in reference)
            {
                Assert.Equal(at, table.Find(slot));
            }
            Assert.Equal(-1, table.Find(1 << 30)); // never added (outside the range drawn)
        }, iter: 200);
    }

    [Fact]
    public void Clear_ForgetsEverySlot()
    {
        var table = new SlotTable();
        for (int slot = 0; slot < 500; slot++)
        {
            table.FindOrAdd(slot * 7, out _);
        }
        table.Clear();
        Assert.Equal(0, table.Count);
        Assert.Equal(-1, table.Find(7));
        Assert.Equal(0, table.FindOrAdd(21, out _));
    }

    [Theory]
    [InlineData(nameof(LearnerKind.Ftrl))]
    [InlineData(nameof(LearnerKind.AdaGrad))]
    public void ExportImport_ManySlots_RestoresEveryWeightAndTheSameState(string learner)
    {
        var options = new ModelOptions { Learner = Enum.Parse<LearnerKind>(learner), HashBits = 18, HalfLifeLabels = 500 };
        var trained = OnlineLearner.Create(options);
        var random = new Random(3);
        var x = new SparseVector();
        for (int i = 0; i < 3_000; i++)
        {
            x.Clear();
            for (int f = 0; f < 8; f++)
            {
                x.Add(random.Next(1 << 18), random.NextDouble() * 2 - 1);
            }
            trained.Update(x, random.Next(2));
        }
        var state = trained.Export();
        Assert.True(state.Slots.Length > 5_000); // well past the table's first sizes
        Assert.True(state.Slots.SequenceEqual(state.Slots.Order()));

        var restored = OnlineLearner.Create(options);
        restored.Import(state);
        foreach (int slot in state.Slots.Concat([0, 1, (1 << 18) - 1]))
        {
            Assert.Equal(trained.Weight(slot), restored.Weight(slot));
        }
        var again = restored.Export();
        Assert.Equal(state.Slots, again.Slots);
        Assert.Equal(state.First, again.First);
        Assert.Equal(state.Second, again.Second);
        Assert.Equal(state.Third, again.Third);
    }

    [Fact]
    public void Import_SlotOutsideTheModelOrListedTwice_IsRefusedWithTheReason()
    {
        var learner = OnlineLearner.Create(new ModelOptions { Learner = LearnerKind.AdaGrad, HashBits = 10 });
        var outside = Assert.Throws<InvalidDataException>(() => learner.Import(new LearnerState { Slots = [3, 1024], First = [1, 2], Second = [1, 1] }));
        Assert.Contains("Model:HashBits", outside.Message, StringComparison.Ordinal);
        var twice = Assert.Throws<InvalidDataException>(() => learner.Import(new LearnerState { Slots = [5, 5], First = [1, 2], Second = [1, 1] }));
        Assert.Contains("twice", twice.Message, StringComparison.Ordinal);
        var ragged = Assert.Throws<InvalidDataException>(() => learner.Import(new LearnerState { Slots = [5, 6], First = [1], Second = [1, 1] }));
        Assert.Contains("do not match", ragged.Message, StringComparison.Ordinal);
    }
}
