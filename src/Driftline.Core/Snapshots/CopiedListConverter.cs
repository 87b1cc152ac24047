using System.Text.Json;
using System.Text.Json.Serialization;

namespace Driftline.Core.Snapshots;

/// <summary>Reads and writes a <see cref="CopiedList{TItem}"/> as a JSON array of its items.</summary>
internal sealed class CopiedListConverter<TList, TItem> : JsonConverter<TList>
    where TList : CopiedList<TItem>, ICopiedListOf<TList, TItem>
{
    /// <inheritdoc />
    public override TList Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options) =>
        TList.Of(CopiedList<TItem>.ReadList(ref reader, options));

    /// <inheritdoc />
    public override void Write(Utf8JsonWriter writer, TList value, JsonSerializerOptions options) => value.Write(writer, options);
}
