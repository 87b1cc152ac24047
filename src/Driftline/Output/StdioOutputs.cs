using System.Buffers;
using System.Text.Encodings.Web;
using System.Text.Json;
using Driftline.Core.Events;
using Driftline.Pipeline;
using Serilog;

namespace Driftline.Output;

/// <summary>
/// The worker's outputs without Kafka: predictions as JSON lines on standard output, alerts
/// as JSON lines after <paramref name="alertPrefix"/> (<c>alert: </c> on standard error, where
/// the log's lines are too; none in a file of their own), dead letters as warnings in the log.
/// Flushed after every batch so a pipe downstream sees predictions as they are made. Used by
/// the writer stage only.
/// </summary>
internal sealed class StdioOutputs(TextWriter predictions, TextWriter alerts, string alertPrefix = "")
{
    private readonly ArrayBufferWriter<byte> _buffer = new(1 << 16);
    private readonly Utf8JsonWriter _json = new(Stream.Null, new JsonWriterOptions { SkipValidation = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping });

    /// <summary>Predictions written.</summary>
    public long Predictions { get; private set; }

    /// <summary>Alerts written.</summary>
    public long Alerts { get; private set; }

    /// <summary>Writes one batch's results.</summary>
    public void Write(OutputBatch batch)
    {
        _buffer.ResetWrittenCount();
        PredictionLines.Append(_buffer, _json, batch.Predictions);
        Predictions += batch.PredictionCount;
        if (_buffer.WrittenCount > 0)
        {
            predictions.Write(System.Text.Encoding.UTF8.GetString(_buffer.WrittenSpan));
            predictions.Flush();
        }

        foreach (var alert in batch.Alerts)
        {
            _buffer.ResetWrittenCount();
            _json.Reset(_buffer);
            RecordJson.WriteAlert(_json, alert);
            _json.Flush();
            alerts.WriteLine(alertPrefix + System.Text.Encoding.UTF8.GetString(_buffer.WrittenSpan));
            Alerts++;
        }
        if (batch.Alerts.Count > 0)
        {
            alerts.Flush();
        }
        foreach (var dead in batch.DeadLetters)
        {
            Log.Warning("Dead letter at line {Line}: {Reason}: {Raw}", dead.Line, dead.Reason, dead.Raw);
        }
    }
}
