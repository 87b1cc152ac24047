using System.Buffers;
using System.Globalization;
using System.Runtime.CompilerServices;
using System.Text;
using System.Text.Json;
using Driftline.Core.Scoring;

namespace Driftline.Core.Events;

/// <summary>
/// Formats prediction JSON lines straight into a byte buffer, byte for byte what
/// <see cref="RecordJson.WritePrediction"/> writes through a <see cref="Utf8JsonWriter"/>
/// (checked against it in the tests), without the writer's per-line reset, validation and
/// escaping scans. An id or key with a character JSON might escape goes through the writer.
/// </summary>
/// <remarks>
/// One line per scored event makes this the output's hot loop: a million-event replay writes
/// 118 MB of it.
/// </remarks>
internal static class PredictionLines
{
    // Characters every encoder leaves as they are: printable ASCII without the quote, the
    // backslash and the ones the default encoder escapes for HTML (&lt; &gt; &amp; ' + `).
    // The line without its id and key: 62 bytes of names and punctuation, a double (at most 24
    // characters), a long (at most 20) and the time (at most 28), rounded up.
    private const int MaxFixedBytes = 200;

    private static readonly SearchValues<char> Plain = SearchValues.Create(
        " !#$%()*,-./0123456789:;=?@ABCDEFGHIJKLMNOPQRSTUVWXYZ[]^_abcdefghijklmnopqrstuvwxyz{|}~");

    /// <summary>
    /// Appends each prediction as one JSON object and a newline; <paramref name="json"/> is
    /// used (and reset) only for the rare line that needs escaping.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void Append(ArrayBufferWriter<byte> buffer, Utf8JsonWriter json, ReadOnlySpan<Prediction> predictions)
    {
        ArgumentNullException.ThrowIfNull(buffer);
        ArgumentNullException.ThrowIfNull(json);
        foreach (ref readonly var p in predictions)
        {
            if (p.Id.AsSpan().ContainsAnyExcept(Plain) || p.Key.AsSpan().ContainsAnyExcept(Plain) || !PlainNames(p.ClassNames))
            {
                json.Reset(buffer);
                RecordJson.WritePrediction(json, p);
                json.Flush();
                buffer.Write("\n"u8);
                continue;
            }
            // With recalibration on, a multiclass line holds two objects over the classes.
            var span = buffer.GetSpan(MaxFixedBytes + p.Id.Length + p.Key.Length + (p.RawClasses is null ? 1 : 2) * ClassBytes(p.ClassNames));
            int n = Put(span, 0, "{\"id\":\""u8);
            n += Encoding.ASCII.GetBytes(p.Id, span[n..]);
            n = Put(span, n, "\",\"key\":\""u8);
            n += Encoding.ASCII.GetBytes(p.Key, span[n..]);
            n = Put(span, n, "\",\"p\":"u8);
            bool fits = true;
            int written;
            if (p.Classes is { } classes && p.ClassNames is { } names)
            {
                // Multiclass: an object over the classes in the configured order.
                n = ClassObject(span, n, classes, names, ref fits);
                if (p.RawClasses is { } raw)
                {
                    // Recalibration on: p is served, p_raw the model's own.
                    n = Put(span, n, ",\"p_raw\":"u8);
                    n = ClassObject(span, n, raw, names, ref fits);
                }
            }
            else
            {
                // Shortest round-trip form, as the JSON writer formats a double.
                fits &= p.P.TryFormat(span[n..], out written, default, CultureInfo.InvariantCulture);
                n += written;
                if (!double.IsNaN(p.Raw))
                {
                    n = Put(span, n, ",\"p_raw\":"u8);
                    fits &= p.Raw.TryFormat(span[n..], out written, default, CultureInfo.InvariantCulture);
                    n += written;
                }
            }
            n = Put(span, n, ",\"model_version\":"u8);
            fits &= p.ModelVersion.TryFormat(span[n..], out written, default, CultureInfo.InvariantCulture);
            n += written;
            System.Diagnostics.Debug.Assert(fits, "the line fits its reserved bytes");
            if (p.TimeTicks != ParsedRecord.NoTime)
            {
                n = Put(span, n, ",\"time\":\""u8);
                n += Time(span[n..], p.TimeTicks);
                span[n++] = (byte)'"';
            }
            n = Put(span, n, "}\n"u8);
            buffer.Advance(n);
        }
    }

    private static int ClassObject(Span<byte> span, int n, double[] values, IReadOnlyList<string> names, ref bool fits)
    {
        span[n++] = (byte)'{';
        for (int k = 0; k < values.Length; k++)
        {
            if (k > 0)
            {
                span[n++] = (byte)',';
            }
            span[n++] = (byte)'"';
            n += Encoding.ASCII.GetBytes(names[k], span[n..]);
            n = Put(span, n, "\":"u8);
            fits &= values[k].TryFormat(span[n..], out int written, default, CultureInfo.InvariantCulture);
            n += written;
        }
        span[n++] = (byte)'}';
        return n;
    }

    private static bool PlainNames(IReadOnlyList<string>? names)
    {
        if (names is null)
        {
            return true;
        }
        foreach (var name in names)
        {
            if (name.AsSpan().ContainsAnyExcept(Plain))
            {
                return false;
            }
        }
        return true;
    }

    // Per class: its name, quotes, colon, comma and a double (at most 24 characters).
    private static int ClassBytes(IReadOnlyList<string>? names)
    {
        if (names is null)
        {
            return 0;
        }
        int bytes = 2;
        foreach (var name in names)
        {
            bytes += name.Length + 28;
        }
        return bytes;
    }

    private static int Put(Span<byte> span, int at, ReadOnlySpan<byte> text)
    {
        text.CopyTo(span[at..]);
        return at + text.Length;
    }

    // ISO 8601 round-trip form with the fraction's trailing zeros dropped (and the point when
    // nothing is left), which is how the JSON writer writes a DateTime: 2026-03-02T10:00:00.5Z.
    private static int Time(Span<byte> span, long ticks)
    {
        new DateTime(ticks, DateTimeKind.Utc).TryFormat(span, out int written, "O", CultureInfo.InvariantCulture);
        const int point = 19; // yyyy-MM-ddTHH:mm:ss
        int end = written - 1; // the Z
        int last = end - 1;
        while (last > point && span[last] == (byte)'0')
        {
            last--;
        }
        if (last == point)
        {
            last--;
        }
        span[last + 1] = (byte)'Z';
        return last + 2;
    }
}
