using System.Text.Json;
using System.Text.Json.Serialization;

namespace Driftline.Core.Snapshots;

/// <summary>Reads and writes a <see cref="CopiedList{TItem}"/> as a JSON array of its items.</summary>
internal sealed class CopiedListConverter<TList, TItem> : JsonConverter<TList>
    where TList : CopiedList<TItem>, ICopiedListOf<TList, TItem>
{
    /// <inheritdoc />
    public override TList Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        try
        {
            return TList.Of(CopiedList<TItem>.ReadList(ref reader, options));
        }
        catch (JsonException ex) when (ex.Path is { Length: > 0 } inner && inner[0] == '$')
        {
            // The list is read by a call of its own, whose paths start at the array ($[0]): name the
            // item from the snapshot's side (pending[0]), as the one call for the whole file did.
            string reason = ex.Message;
            int at = reason.IndexOf(" Path: ", StringComparison.Ordinal);
            throw new JsonException($"{TList.JsonName}{inner[1..]}: {(at >= 0 ? reason[..at] : reason)}", ex);
        }
    }

    /// <inheritdoc />
    public override void Write(Utf8JsonWriter writer, TList value, JsonSerializerOptions options) => value.Write(writer, options);
}
