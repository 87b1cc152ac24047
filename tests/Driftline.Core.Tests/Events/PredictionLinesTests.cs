using System.Buffers;
using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;
using CsCheck;
using Driftline.Core.Events;
using Driftline.Core.Scoring;
using Xunit;

namespace Driftline.Core.Tests.Events;

/// <summary>
/// The direct line formatter against the reference it replaces: the BCL's
/// <see cref="Utf8JsonWriter"/> writing the same prediction (System.Text.Json is the
/// outside source here; the formatter must agree with it byte for byte).
/// </summary>
public sealed class PredictionLinesTests
{
    private static readonly Gen<string> Text = Gen.OneOf(
        Gen.String[Gen.Char["a-z0-9-_."], 1, 20],
        Gen.String[Gen.Char, 0, 12],
        Gen.Const("o-1\"quoted\\"),
        Gen.Const("zone<&>'+`"),
        Gen.Const("café-ü"));

    private static readonly Gen<long> Ticks = Gen.OneOf(
        Gen.Const(ParsedRecord.NoTime),
        Gen.Long[DateTime.UnixEpoch.Ticks, new DateTime(2100, 1, 1).Ticks],
        Gen.Long[0, 4_000_000_000].Select(s => DateTime.UnixEpoch.Ticks + s * TimeSpan.TicksPerSecond),
        Gen.Long[0, 4_000_000_000].Select(ms => DateTime.UnixEpoch.Ticks + ms * TimeSpan.TicksPerMillisecond));

    private static readonly Gen<Prediction> Predictions =
        from id in Text
        from key in Text
        from p in Gen.OneOf(Gen.Double[0.0, 1.0], Gen.Const(0.5), Gen.Const(1e-300), Gen.Const(1.0))
        from version in Gen.Long[0, long.MaxValue]
        from ticks in Ticks
        select new Prediction(id, key, p, version, ticks);

    // Multiclass lines: p an object over named classes (issue 10).
    private static readonly Gen<Prediction> ClassPredictions =
        from id in Text
        from names in Gen.OneOf(Gen.Const(new[] { "on-time", "late", "failed", "cancelled" }), Gen.Const(new[] { "a", "b\"q", "c" }), Text.Array[3, 5])
        from p in Gen.Double[0.0, 1.0].Array[names.Length]
        from version in Gen.Long[0, long.MaxValue]
        from ticks in Ticks
        select new Prediction(id, "default", double.NaN, version, ticks, p, names);

    // Multiclass with recalibration on: p the served object, p_raw the model's own (issue 11).
    private static readonly Gen<Prediction> ServedClassPredictions =
        from id in Text
        from names in Gen.OneOf(Gen.Const(new[] { "on-time", "late", "failed", "cancelled" }), Gen.Const(new[] { "a", "b\"q", "c" }), Text.Array[3, 5])
        from p in Gen.Double[0.0, 1.0].Array[names.Length]
        from raw in Gen.Double[0.0, 1.0].Array[names.Length]
        from version in Gen.Long[0, long.MaxValue]
        from ticks in Ticks
        select new Prediction(id, "default", double.NaN, version, ticks, p, names, RawClasses: raw);

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void Append_AnyPredictions_SameBytesAsTheJsonWriter(bool relaxed)
    {
        var options = new JsonWriterOptions { SkipValidation = true, Encoder = relaxed ? JavaScriptEncoder.UnsafeRelaxedJsonEscaping : JavaScriptEncoder.Default };
        Gen.OneOf(Predictions, ClassPredictions, ServedClassPredictions).Array[0, 40].Sample(batch =>
        {
            var fast = new ArrayBufferWriter<byte>();
            using (var json = new Utf8JsonWriter(fast, options))
            {
                PredictionLines.Append(fast, json, batch);
            }

            var reference = new ArrayBufferWriter<byte>();
            using (var json = new Utf8JsonWriter(reference, options))
            {
                foreach (var p in batch)
                {
                    json.Reset(reference);
                    RecordJson.WritePrediction(json, p);
                    json.Flush();
                    reference.Write("\n"u8);
                }
            }
            Assert.Equal(Encoding.UTF8.GetString(reference.WrittenSpan), Encoding.UTF8.GetString(fast.WrittenSpan));
        });
    }

    [Fact]
    public void Append_TimeOnTheSecond_DropsTheFraction()
    {
        var buffer = new ArrayBufferWriter<byte>();
        using var json = new Utf8JsonWriter(buffer);
        var at = new DateTime(2026, 3, 2, 10, 0, 0, DateTimeKind.Utc).AddTicks(5_000_000).Ticks;
        PredictionLines.Append(buffer, json, [new Prediction("o-1", "default", 0.25, 3, at), new Prediction("o-2", "default", 0.5, 4, at - 5_000_000)]);
        Assert.Equal(
            "{\"id\":\"o-1\",\"key\":\"default\",\"p\":0.25,\"model_version\":3,\"time\":\"2026-03-02T10:00:00.5Z\"}\n" +
            "{\"id\":\"o-2\",\"key\":\"default\",\"p\":0.5,\"model_version\":4,\"time\":\"2026-03-02T10:00:00Z\"}\n",
            Encoding.UTF8.GetString(buffer.WrittenSpan));
    }
}
