using System.Text;
using System.Text.Json;
using Driftline.Core.Features;

namespace Driftline.Cli;

/// <summary>
/// Recovers readable names for hashed slots from one event's JSON (for reports of a batch
/// fit; not on the scoring path). A categorical is named <c>name=value</c>, a number or
/// boolean by its name.
/// </summary>
internal static class FeatureNameScan
{
    /// <summary>Adds the name and sign of every feature of <paramref name="utf8"/> to <paramref name="names"/> where its slot has none yet.</summary>
    public static void Scan(ReadOnlySpan<byte> utf8, int mask, Dictionary<int, (string Name, double Sign)> names)
    {
        using var doc = JsonDocument.Parse(utf8.ToArray());
        if (!doc.RootElement.TryGetProperty("features", out var features) || features.ValueKind != JsonValueKind.Object)
        {
            return;
        }
        foreach (var f in features.EnumerateObject())
        {
            ulong nameHash = FeatureHash.Name(Encoding.UTF8.GetBytes(f.Name));
            switch (f.Value.ValueKind)
            {
                case JsonValueKind.String:
                    Add(FeatureHash.Value(nameHash, Encoding.UTF8.GetBytes(f.Value.GetString()!)), $"{f.Name}={f.Value.GetString()}");
                    break;
                case JsonValueKind.Array:
                    foreach (var item in f.Value.EnumerateArray().Where(v => v.ValueKind == JsonValueKind.String))
                    {
                        Add(FeatureHash.Value(nameHash, Encoding.UTF8.GetBytes(item.GetString()!)), $"{f.Name}={item.GetString()}");
                    }
                    break;
                case JsonValueKind.Number or JsonValueKind.True or JsonValueKind.False:
                    Add(nameHash, f.Name);
                    break;
            }
        }

        void Add(ulong hash, string name) => names.TryAdd(FeatureHash.Slot(hash, mask), (name, FeatureHash.Sign(hash)));
    }
}
