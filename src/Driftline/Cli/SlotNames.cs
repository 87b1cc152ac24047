using System.Globalization;
using System.Text;
using Driftline.Core.Features;
using Driftline.Core.Options;

namespace Driftline.Cli;

/// <summary>
/// The names behind a model's hashed slots, rebuilt from the hashes a replay recorded: each
/// name's slot and sign under the model's <c>HashBits</c>, plus the declared interactions of
/// every recorded pair of names.
/// </summary>
internal sealed class SlotNames
{
    private readonly Dictionary<int, List<(string Name, double Sign)>> _bySlot = [];

    private SlotNames()
    {
    }

    /// <summary>Builds the map from saved hash → text pairs (null gives an empty map).</summary>
    public static SlotNames Build(Dictionary<string, string>? recorded, ModelOptions model)
    {
        ArgumentNullException.ThrowIfNull(model);
        var map = new SlotNames();
        if (recorded is null)
        {
            return map;
        }
        int mask = (1 << model.HashBits) - 1;
        var entries = new List<(ulong Hash, string Text)>();
        foreach (var (key, text) in recorded)
        {
            if (ulong.TryParse(key, NumberStyles.None, CultureInfo.InvariantCulture, out ulong hash))
            {
                entries.Add((hash, text));
                map.Add(FeatureHash.Slot(hash, mask), text, FeatureHash.Sign(hash));
            }
        }
        foreach (var interaction in model.Interactions)
        {
            var parts = interaction.Split('*', StringSplitOptions.TrimEntries);
            if (parts.Length != 2)
            {
                continue;
            }
            // Interactions hash the two features' own hashes, so every recorded pair of the two names is a candidate.
            var left = entries.Where(e => NamePart(e.Text) == parts[0]).ToList();
            var right = entries.Where(e => NamePart(e.Text) == parts[1]).ToList();
            foreach (var a in left)
            {
                foreach (var b in right)
                {
                    ulong h = FeatureHash.Cross(a.Hash, b.Hash);
                    map.Add(FeatureHash.Slot(h, mask), $"{a.Text} × {b.Text}", FeatureHash.Sign(h));
                }
            }
        }
        return map;
    }

    /// <summary>
    /// The name for a slot holding <paramref name="weight"/>, and in <paramref name="shown"/>
    /// the weight as that name sees it (the hash's sign applied). Names that share the slot
    /// are all listed; an unknown slot reads "slot N".
    /// </summary>
    public string Describe(int slot, double weight, out double shown)
    {
        if (!_bySlot.TryGetValue(slot, out var names))
        {
            shown = weight;
            return $"(unnamed slot {slot.ToString(CultureInfo.InvariantCulture)})";
        }
        shown = names[0].Sign * weight;
        if (names.Count == 1)
        {
            return names[0].Name;
        }
        // A collision: the slot's weight serves several names, each with its own sign.
        var text = new StringBuilder(names[0].Name);
        for (int i = 1; i < names.Count && i < 4; i++)
        {
            text.Append(" | ").Append(names[i].Sign == names[0].Sign ? "" : "−").Append(names[i].Name);
        }
        if (names.Count > 4)
        {
            text.Append(CultureInfo.InvariantCulture, $" | {names.Count - 4} more");
        }
        return text.ToString();
    }

    /// <summary>
    /// The one name behind <paramref name="slot"/> and its hash sign; false when the slot has
    /// no recorded name or is shared by several.
    /// </summary>
    public bool TryName(int slot, out string name, out double sign)
    {
        if (_bySlot.TryGetValue(slot, out var names) && names.Count == 1)
        {
            (name, sign) = names[0];
            return true;
        }
        name = "";
        sign = 1;
        return false;
    }

    /// <summary>
    /// The categorical a plain <c>name=value</c> feature belongs to (<c>name</c>); null for a
    /// number, a boolean or an interaction.
    /// </summary>
    public static string? CategoricalOf(string featureName)
    {
        ArgumentNullException.ThrowIfNull(featureName);
        int eq = featureName.IndexOf('=', StringComparison.Ordinal);
        return eq <= 0 || featureName.Contains(" × ", StringComparison.Ordinal) ? null : featureName[..eq];
    }

    private void Add(int slot, string name, double sign)
    {
        if (!_bySlot.TryGetValue(slot, out var list))
        {
            _bySlot[slot] = list = [];
        }
        list.Add((name, sign));
    }

    private static string NamePart(string text)
    {
        int eq = text.IndexOf('=', StringComparison.Ordinal);
        return eq < 0 ? text : text[..eq];
    }
}
