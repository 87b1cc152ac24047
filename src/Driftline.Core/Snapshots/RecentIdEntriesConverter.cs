using System.Text.Json;
using System.Text.Json.Serialization;
using System.Text.Json.Serialization.Metadata;

namespace Driftline.Core.Snapshots;

/// <summary>
/// Reads and writes a snapshot's <c>inline_labelled</c> array: a list through the context's own
/// metadata for it, a copy of the keys by <see cref="RecentIdEntries.WriteCopy"/>.
/// </summary>
internal sealed class RecentIdEntriesConverter : JsonConverter<RecentIdEntries>
{
    /// <inheritdoc />
    public override RecentIdEntries Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options) =>
        new(JsonSerializer.Deserialize(ref reader, ListInfo(options)) ?? []);

    /// <inheritdoc />
    public override void Write(Utf8JsonWriter writer, RecentIdEntries value, JsonSerializerOptions options)
    {
        if (value.IsCopy)
        {
            value.WriteCopy(writer);
        }
        else
        {
            JsonSerializer.Serialize(writer, value.List, ListInfo(options));
        }
    }

    private static JsonTypeInfo<List<string>> ListInfo(JsonSerializerOptions options) =>
        (JsonTypeInfo<List<string>>)options.GetTypeInfo(typeof(List<string>));
}
