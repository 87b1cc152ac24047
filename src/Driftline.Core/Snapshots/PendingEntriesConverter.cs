using System.Text.Json;
using System.Text.Json.Serialization;
using System.Text.Json.Serialization.Metadata;

namespace Driftline.Core.Snapshots;

/// <summary>
/// Reads and writes a snapshot's <c>pending</c> array: a list goes through the serializer's
/// own metadata for it (the context's, so the options of a model file or a checkpoint apply),
/// a copy of the store's records is written by <see cref="PendingEntries.WriteCopy"/>.
/// </summary>
internal sealed class PendingEntriesConverter : JsonConverter<PendingEntries>
{
    /// <inheritdoc />
    public override PendingEntries Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options) =>
        new(JsonSerializer.Deserialize(ref reader, ListInfo(options)) ?? []);

    /// <inheritdoc />
    public override void Write(Utf8JsonWriter writer, PendingEntries value, JsonSerializerOptions options)
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

    private static JsonTypeInfo<List<PendingSnapshot>> ListInfo(JsonSerializerOptions options) =>
        (JsonTypeInfo<List<PendingSnapshot>>)options.GetTypeInfo(typeof(List<PendingSnapshot>));
}
