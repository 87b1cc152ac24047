using System.Buffers;
using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;
using Confluent.Kafka;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Scoring;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// One partition's sinks on the shared producer: predictions (keyed by model key), alerts
/// and dead letters. Used by one thread at a time (whichever drains the partition). Every
/// message gets a delivery report; a failed delivery is fatal, because committing past a
/// lost prediction would lose it for good.
/// </summary>
internal sealed class KafkaOutputs : IScoringSink
{
    private static readonly JsonWriterOptions WriterOptions = new() { SkipValidation = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };

    private readonly IProducer<byte[]?, byte[]> _producer;
    private readonly string _predictions;
    private readonly string? _alerts;
    private readonly string _deadLetters;
    private readonly OutputCounts _stats;
    private readonly DeliveryFailure _failure;
    private readonly ArrayBufferWriter<byte> _buffer = new(4096);
    private readonly Utf8JsonWriter _json;
    private readonly Dictionary<string, byte[]> _keys = new(StringComparer.Ordinal);

    private readonly Action<AlertTransition>? _alertObserver;

    /// <summary>
    /// Creates the sinks of one partition; <paramref name="alerts"/> may be null (alerts are then
    /// only logged), and <paramref name="alertObserver"/> also sees every alert (e.g. a webhook) and must not block.
    /// </summary>
    public KafkaOutputs(IProducer<byte[]?, byte[]> producer, string predictions, string? alerts, string deadLetters, OutputCounts stats, DeliveryFailure failure,
        Action<AlertTransition>? alertObserver = null)
    {
        _alertObserver = alertObserver;
        _producer = producer;
        _predictions = predictions;
        _alerts = alerts;
        _deadLetters = deadLetters;
        _stats = stats;
        _failure = failure;
        _json = new Utf8JsonWriter(_buffer, WriterOptions);
    }

    /// <inheritdoc />
    public void OnPrediction(in Prediction prediction)
    {
        // The line the file and stdout outputs write, without its newline: the same bytes as
        // the JSON writer's, formatted straight into the buffer (the per-event hot path).
        _buffer.ResetWrittenCount();
        PredictionLines.Append(_buffer, _json, new ReadOnlySpan<Prediction>(in prediction));
        Produce(_predictions, KeyBytes(prediction.Key), _buffer.WrittenSpan[..^1].ToArray());
        _stats.Predictions++;
    }

    /// <inheritdoc />
    public void OnAlert(AlertTransition alert)
    {
        Log.Warning("Alert {Rule} {State}: {Message}", alert.Rule, alert.Raised ? "raised" : "cleared", RecordJson.Describe(alert));
        _alertObserver?.Invoke(alert);
        _stats.Alerts++;
        _stats.AlertsActive += alert.Raised ? 1 : -1;
        if (_alerts is null)
        {
            return;
        }
        Begin();
        RecordJson.WriteAlert(_json, alert);
        Send(_alerts, KeyBytes(alert.Rule));
    }

    /// <inheritdoc />
    public void OnMetrics(in MetricsRow row) => _stats.LastMetrics = row;

    /// <summary>Sends a rejected record to the dead-letter topic with why and where it came from.</summary>
    public void DeadLetter(string reason, string topic, int partition, long offset, byte[]? key, ReadOnlySpan<byte> value)
    {
        _stats.DeadLetters++;
        Begin();
        _json.WriteStartObject();
        _json.WriteString("reason"u8, reason);
        _json.WriteString("source_topic"u8, topic);
        _json.WriteNumber("partition"u8, partition);
        _json.WriteNumber("offset"u8, offset);
        // The record as text when it is UTF-8, so a person can read it, else base64.
        var text = Utf8Prefix(value, MaxRawBytes);
        if (System.Text.Unicode.Utf8.IsValid(text))
        {
            _json.WriteString("raw"u8, text);
        }
        else
        {
            _json.WriteString("raw_encoding"u8, "base64");
            _json.WriteBase64String("raw"u8, value.Length > MaxRawBase64Bytes ? value[..MaxRawBase64Bytes] : value);
        }
        _json.WriteEndObject();
        Send(_deadLetters, key);
    }

    /// <summary>Most bytes of a record a dead letter carries as text.</summary>
    public const int MaxRawBytes = 8_000;

    /// <summary>Most bytes of a record a dead letter carries as base64 (8,000 characters).</summary>
    public const int MaxRawBase64Bytes = 6_000;

    /// <summary>
    /// The first <paramref name="max"/> bytes at most, cut before a UTF-8 sequence that would
    /// be split (a continuation byte, 10xxxxxx, never starts a character; RFC 3629 section 3).
    /// </summary>
    public static ReadOnlySpan<byte> Utf8Prefix(ReadOnlySpan<byte> value, int max)
    {
        if (value.Length <= max)
        {
            return value;
        }
        int cut = max;
        // A sequence is at most 4 bytes: look back at most 3 for the byte that starts it.
        while (cut > 0 && cut > max - 3 && (value[cut] & 0xC0) == 0x80)
        {
            cut--;
        }
        return value[..cut];
    }

    private void Begin()
    {
        _buffer.ResetWrittenCount();
        _json.Reset(_buffer);
    }

    private void Send(string topic, byte[]? key)
    {
        _json.Flush();
        Produce(topic, key, _buffer.WrittenSpan.ToArray());
    }

    private void Produce(string topic, byte[]? key, byte[] value) =>
        _failure.Produce(_producer, topic, new Message<byte[]?, byte[]> { Key = key, Value = value }, _stats);

    private byte[] KeyBytes(string key)
    {
        if (!_keys.TryGetValue(key, out var bytes))
        {
            bytes = Encoding.UTF8.GetBytes(key);
            if (_keys.Count < 10_000)
            {
                _keys.Add(key, bytes);
            }
        }
        return bytes;
    }
}
