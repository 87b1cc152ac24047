using System.Buffers;
using System.Globalization;
using System.Text;
using System.Text.Json;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Scoring;
using Driftline.Pipeline;

namespace Driftline.Output;

/// <summary>
/// The files a replay writes into its output folder: <c>predictions.jsonl</c>,
/// <c>alerts.jsonl</c>, <c>dead-letters.jsonl</c> and <c>metrics.csv</c>. Used by the writer
/// stage only (one thread).
/// </summary>
internal sealed class ReplayOutputs : IDisposable
{
    /// <summary>Header of <c>metrics.csv</c>.</summary>
    public const string MetricsHeader =
        "labels,events,time,window_labels,log_loss,prior_log_loss,skill,brier,ece,calibration_in_the_large,mean_p,mean_y,total_log_loss,total_prior_log_loss,total_brier,total_ece,late_labels,expired_labels";

    private readonly FileStream _predictions;
    private readonly FileStream _alerts;
    private readonly FileStream _deadLetters;
    private readonly StreamWriter _metrics;
    private readonly ArrayBufferWriter<byte> _buffer = new(1 << 20);
    private readonly Utf8JsonWriter _json;

    /// <summary>Creates (truncating) the output files in <paramref name="directory"/>.</summary>
    public ReplayOutputs(string directory)
    {
        Directory.CreateDirectory(directory);
        _predictions = Create(directory, "predictions.jsonl");
        _alerts = Create(directory, "alerts.jsonl");
        _deadLetters = Create(directory, "dead-letters.jsonl");
        _metrics = new StreamWriter(Create(directory, "metrics.csv"), new UTF8Encoding(false)) { NewLine = "\n" };
        _metrics.WriteLine(MetricsHeader);
        _json = new Utf8JsonWriter(_buffer, new JsonWriterOptions { SkipValidation = true, Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping });
    }

    /// <summary>Alerts written, for the summary.</summary>
    public List<AlertTransition> AlertsWritten { get; } = [];

    /// <summary>
    /// Also hands every alert written to this webhook (it queues and returns at once); null
    /// sends none. Set before the run; the caller owns and drains the sink.
    /// </summary>
    public WebhookAlertSink? Webhook { get; set; }

    /// <summary>Writes one batch's results.</summary>
    public void Write(OutputBatch batch)
    {
        _buffer.ResetWrittenCount();
        PredictionLines.Append(_buffer, _json, batch.Predictions);
        _predictions.Write(_buffer.WrittenSpan);

        foreach (var alert in batch.Alerts)
        {
            AlertsWritten.Add(alert);
            WriteLine(_alerts, w => RecordJson.WriteAlert(w, alert));
            Webhook?.Enqueue(alert);
        }
        foreach (var dead in batch.DeadLetters)
        {
            WriteLine(_deadLetters, w =>
            {
                w.WriteStartObject();
                w.WriteNumber("line"u8, dead.Line);
                w.WriteString("reason"u8, dead.Reason);
                w.WriteString("raw"u8, dead.Raw);
                w.WriteEndObject();
            });
        }
        foreach (var row in batch.Metrics)
        {
            _metrics.WriteLine(FormatMetrics(row));
        }
    }

    /// <summary>One <c>metrics.csv</c> line.</summary>
    public static string FormatMetrics(in MetricsRow r)
    {
        var c = CultureInfo.InvariantCulture;
        string time = r.TimeTicks == ParsedRecord.NoTime ? "" : new DateTime(r.TimeTicks, DateTimeKind.Utc).ToString("yyyy-MM-ddTHH:mm:ss.fffZ", c);
        double skill = r.PriorWindow.LogLoss > 0 ? 1 - r.Window.LogLoss / r.PriorWindow.LogLoss : double.NaN;
        return string.Join(',',
            r.Labels.ToString(c), r.Events.ToString(c), time, r.Window.Count.ToString(c),
            F(r.Window.LogLoss), F(r.PriorWindow.LogLoss), F(skill), F(r.Window.Brier), F(r.Window.Ece),
            F(r.Window.CalibrationInTheLarge), F(r.Window.MeanP), F(r.Window.MeanY),
            F(r.Total.LogLoss), F(r.PriorTotal.LogLoss), F(r.Total.Brier), F(r.Total.Ece),
            r.LateLabels.ToString(c), r.ExpiredLabels.ToString(c));
    }

    private static string F(double v) => double.IsFinite(v) ? v.ToString("0.######", CultureInfo.InvariantCulture) : "";

    private void WriteLine(FileStream file, Action<Utf8JsonWriter> write)
    {
        _buffer.ResetWrittenCount();
        _json.Reset(_buffer);
        write(_json);
        _json.Flush();
        _buffer.Write("\n"u8);
        file.Write(_buffer.WrittenSpan);
    }

    private static FileStream Create(string directory, string name) =>
        new(Path.Combine(directory, name), FileMode.Create, FileAccess.Write, FileShare.Read, 1 << 16);

    /// <inheritdoc />
    public void Dispose()
    {
        _json.Dispose();
        _predictions.Dispose();
        _alerts.Dispose();
        _deadLetters.Dispose();
        _metrics.Dispose();
    }
}
