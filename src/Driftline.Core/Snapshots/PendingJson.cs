using System.Runtime.InteropServices;
using System.Text.Json;
using Driftline.Core.Scoring;

namespace Driftline.Core.Snapshots;

/// <summary>
/// One pending entry as JSON, written from a decoded record without making the
/// <see cref="PendingSnapshot"/> (and its id, slot and value arrays) first: the same properties
/// in the same order as the snapshot serializer writes that value, so the bytes are the same
/// (a test compares the two on binary, multiclass, served and segmented engines).
/// </summary>
internal static class PendingJson
{
    private static readonly JsonEncodedText Id = JsonEncodedText.Encode("id");
    private static readonly JsonEncodedText Model = JsonEncodedText.Encode("model");
    private static readonly JsonEncodedText TimeTicks = JsonEncodedText.Encode("time_ticks");
    private static readonly JsonEncodedText P = JsonEncodedText.Encode("p");
    private static readonly JsonEncodedText PriorP = JsonEncodedText.Encode("prior_p");
    private static readonly JsonEncodedText Served = JsonEncodedText.Encode("served");
    private static readonly JsonEncodedText ClassP = JsonEncodedText.Encode("class_p");
    private static readonly JsonEncodedText ClassPriorP = JsonEncodedText.Encode("class_prior_p");
    private static readonly JsonEncodedText ServedClassP = JsonEncodedText.Encode("served_class_p");
    private static readonly JsonEncodedText Labelled = JsonEncodedText.Encode("labelled");
    private static readonly JsonEncodedText Slots = JsonEncodedText.Encode("slots");
    private static readonly JsonEncodedText Values = JsonEncodedText.Encode("values");
    private static readonly JsonEncodedText Segment = JsonEncodedText.Encode("segment");

    /// <summary>Writes <see cref="PendingEntries.Entry"/>(<paramref name="e"/>, <paramref name="outputs"/>), its id spelt by <paramref name="key"/>, as the serializer would.</summary>
    public static void Write(Utf8JsonWriter writer, ReadOnlySpan<byte> key, PendingPrediction e, int outputs)
    {
        writer.WriteStartObject();
        writer.WritePropertyName(Id);
        WriteKey(writer, key);
        writer.WriteNumber(Model, e.Model);
        writer.WriteNumber(TimeTicks, e.TimeTicks);
        bool open = !e.Labelled;
        // p and prior_p are left out when 0 (their default), as the serializer does.
        if (open && outputs == 1 && e.P != 0)
        {
            writer.WritePropertyName(P);
            Number(writer, e.P);
        }
        if (open && outputs == 1 && e.PriorP != 0)
        {
            writer.WritePropertyName(PriorP);
            Number(writer, e.PriorP);
        }
        writer.WritePropertyName(Served);
        if (open && double.IsFinite(e.Served))
        {
            Number(writer, e.Served);
        }
        else
        {
            writer.WriteNullValue();
        }
        if (open && outputs != 1)
        {
            Numbers(writer, ClassP, e.ClassP);
            Numbers(writer, ClassPriorP, e.ClassPriorP);
        }
        if (open && !e.ServedClassP.IsEmpty)
        {
            Numbers(writer, ServedClassP, e.ServedClassP);
        }
        writer.WriteBoolean(Labelled, e.Labelled);
        if (open)
        {
            writer.WriteStartArray(Slots);
            foreach (int slot in e.Slots)
            {
                writer.WriteNumberValue(slot);
            }
            writer.WriteEndArray();
            Numbers(writer, Values, e.Values);
            if (e.Segment is not null)
            {
                writer.WriteString(Segment, e.Segment);
            }
        }
        writer.WriteEndObject();
    }

    /// <summary>
    /// Writes the id an <see cref="IdKey"/> key spells as a JSON string, from its bytes: UTF-8 as
    /// it is (the writer escapes it as it would the string), UTF-16 code units as characters.
    /// </summary>
    public static void WriteKey(Utf8JsonWriter writer, ReadOnlySpan<byte> key)
    {
        uint tag = Varint.Read(key, 0, out int header);
        var body = key.Slice(header, (int)(tag >> 1));
        if ((tag & 1) == 0)
        {
            writer.WriteStringValue(body);
        }
        else
        {
            writer.WriteStringValue(MemoryMarshal.Cast<byte, char>(body));
        }
    }

    private static void Numbers(Utf8JsonWriter writer, JsonEncodedText name, ReadOnlySpan<double> values)
    {
        writer.WriteStartArray(name);
        foreach (double v in values)
        {
            Number(writer, v);
        }
        writer.WriteEndArray();
    }

    // JsonNumberHandling.AllowNamedFloatingPointLiterals: the non-finite values as their names in strings.
    private static void Number(Utf8JsonWriter writer, double value)
    {
        if (double.IsFinite(value))
        {
            writer.WriteNumberValue(value);
        }
        else
        {
            writer.WriteStringValue(double.IsNaN(value) ? "NaN" : value > 0 ? "Infinity" : "-Infinity");
        }
    }
}
