using System.Diagnostics.CodeAnalysis;
using System.Runtime.CompilerServices;
using System.Text.Json;
using System.Text.Json.Serialization;

namespace Driftline.Core.Snapshots;

/// <summary>
/// Enums in saved models and checkpoints are written and read by name only. The default string
/// converter also reads a number (<c>"learner": 5</c> or <c>"5"</c>), which would give a
/// learner or scaling mode that does not exist; with this one such a file is refused as
/// damaged, the same rule the configuration follows, and the refusal names the field and the
/// names it takes (the default converter's message names a .NET type instead).
/// </summary>
internal sealed class EnumNamesOnly : JsonConverterFactory
{
    private const string UserTerms = "driftline-user-terms";

    /// <inheritdoc />
    public override bool CanConvert(Type typeToConvert) => typeToConvert.IsEnum;

    /// <summary>
    /// A converter for every enum a snapshot or a checkpoint holds, made without reflection: a
    /// natively compiled build (PublishAot) has no code for a generic type made at run time, so
    /// <c>MakeGenericType</c> would fail there on the first model write. A test walks the
    /// snapshot types and checks each enum among them is listed here.
    /// </summary>
    internal static readonly IReadOnlyDictionary<Type, Func<JsonConverter>> Known = new Dictionary<Type, Func<JsonConverter>>
    {
        [typeof(Options.LearnerKind)] = () => new NamesOf<Options.LearnerKind>(),
        [typeof(Options.ScalingMode)] = () => new NamesOf<Options.ScalingMode>(),
        [typeof(Recalibration.RecalibrationMode)] = () => new NamesOf<Recalibration.RecalibrationMode>(),
        [typeof(Alerts.AlertBaseline)] = () => new NamesOf<Alerts.AlertBaseline>(),
        [typeof(Alerts.AlertDirection)] = () => new NamesOf<Alerts.AlertDirection>(),
        [typeof(Alerts.AlertMetric)] = () => new NamesOf<Alerts.AlertMetric>(),
        [typeof(Alerts.AlertSeverity)] = () => new NamesOf<Alerts.AlertSeverity>(),
        [typeof(Metrics.CalibrationFitStatus)] = () => new NamesOf<Metrics.CalibrationFitStatus>(),
        [typeof(Detectors.DetectorState)] = () => new NamesOf<Detectors.DetectorState>(),
    };

    /// <inheritdoc />
    [UnconditionalSuppressMessage("AOT", "IL3050", Justification = "Reached only for an enum not in Known, and only where code is generated at run time (RuntimeFeature.IsDynamicCodeSupported); Known covers the snapshot types (tested).")]
    [UnconditionalSuppressMessage("Trimming", "IL2071", Justification = "NamesOf<T> has no constructor parameters to keep; as above.")]
    public override JsonConverter? CreateConverter(Type typeToConvert, JsonSerializerOptions options)
    {
        ArgumentNullException.ThrowIfNull(typeToConvert);
        if (Known.TryGetValue(typeToConvert, out var make))
        {
            return make();
        }
        if (!RuntimeFeature.IsDynamicCodeSupported)
        {
            throw new NotSupportedException($"enum {typeToConvert.Name} is not listed in EnumNamesOnly.Known, which a native build needs");
        }
        return (JsonConverter?)Activator.CreateInstance(typeof(NamesOf<>).MakeGenericType(typeToConvert));
    }

    /// <summary>
    /// The reason to show for <paramref name="ex"/>: for an enum value refused here, the field's
    /// path and the names it takes (<c>options.model.learner must be one of Ftrl, AdaGrad, not '5'</c>); else its message.
    /// </summary>
    public static string Describe(JsonException ex)
    {
        ArgumentNullException.ThrowIfNull(ex);
        if (ex.Data[UserTerms] is not true)
        {
            return ex.Message;
        }
        string path = ex.Path is { Length: > 0 } p ? (p.StartsWith("$.", StringComparison.Ordinal) ? p[2..] : p) : "a field";
        return $"{path} {ex.Message}";
    }

    private sealed class NamesOf<T> : JsonConverter<T>
        where T : struct, Enum
    {
        public override T Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
        {
            string given = reader.TokenType == JsonTokenType.String ? reader.GetString() ?? "" : System.Text.Encoding.UTF8.GetString(reader.ValueSpan);
            // A name only: no number (Enum.TryParse reads "5" as a member) and no list of flags.
            if (reader.TokenType == JsonTokenType.String && given.Length > 0 && char.IsLetter(given[0]) && !given.Contains(',', StringComparison.Ordinal)
                && Enum.TryParse(given, ignoreCase: true, out T value) && Enum.IsDefined(value))
            {
                return value;
            }
            var refused = new JsonException($"must be one of {string.Join(", ", Enum.GetNames<T>())}, not '{given}'");
            refused.Data[UserTerms] = true;
            throw refused;
        }

        public override void Write(Utf8JsonWriter writer, T value, JsonSerializerOptions options) => writer.WriteStringValue(value.ToString());
    }
}
