using System.Text.Json;
using System.Text.Json.Serialization;

namespace Driftline.Core.Snapshots;

/// <summary>
/// Enums in saved models and checkpoints are written and read by name only. The default string
/// converter also reads a number (<c>"learner": 5</c> or <c>"5"</c>), which would give a
/// learner or scaling mode that does not exist; with this one such a file is refused as
/// damaged, the same rule the configuration follows.
/// </summary>
internal sealed class EnumNamesOnly : JsonConverterFactory
{
    private static readonly JsonStringEnumConverter Names = new(namingPolicy: null, allowIntegerValues: false);

    /// <inheritdoc />
    public override bool CanConvert(Type typeToConvert) => typeToConvert.IsEnum;

    /// <inheritdoc />
    public override JsonConverter? CreateConverter(Type typeToConvert, JsonSerializerOptions options) => Names.CreateConverter(typeToConvert, options);
}
