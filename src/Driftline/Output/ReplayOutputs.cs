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
/// stage only (one thread). Alerts, dead letters and metric rows reach the file at the end of
/// every batch that has any (a batch is at most <see cref="LineBatch.MaxLines"/> lines), so a
/// killed run keeps them; predictions go out in 64 KiB writes and at the end. A failed write
/// surfaces as an <see cref="OutputException"/> naming the file.
/// </summary>
internal sealed class ReplayOutputs : IDisposable
{
    /// <summary>Header of <c>metrics.csv</c>.</summary>
    public const string MetricsHeader =
        "labels,events,time,window_labels,log_loss,prior_log_loss,skill,brier,ece,calibration_in_the_large,mean_p,mean_y,total_log_loss,total_prior_log_loss,total_brier,total_ece,late_labels,expired_labels";

    private readonly Stream _predictions;
    private readonly Stream _alerts;
    private readonly Stream _deadLetters;
    private readonly StreamWriter _metrics;
    private readonly string _directory;
    private readonly ArrayBufferWriter<byte> _buffer = new(1 << 20);
    private readonly Utf8JsonWriter _json;

    /// <summary>
    /// The header of <c>metrics.csv</c> for a model over <paramref name="classes"/> (null for
    /// binary): a multiclass model's file adds the class-wise ECE and, per class, the mean
    /// predicted probability and the observed rate over the window.
    /// </summary>
    public static string HeaderFor(IReadOnlyList<string>? classes, bool served = false) => (classes is null
        ? MetricsHeader
        : MetricsHeader + ",classwise_ece" + string.Concat(classes.Select(c => $",mean_p:{CsvName(c)},observed:{CsvName(c)}")))
        + (served ? ",served_log_loss,served_brier,served_ece,served_calibration_in_the_large" : "");

    // A class name as a CSV header cell: quoted when it holds a comma, quote or line break (RFC 4180).
    private static string CsvName(string name) =>
        name.AsSpan().IndexOfAny(",\"\r\n") < 0 ? name : "\"" + name.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";

    /// <summary>
    /// Creates the output files anew in <paramref name="directory"/> (an existing file or link
    /// of the same name is replaced, never followed), each opened with <paramref name="create"/>
    /// (default <see cref="OutputFile.CreateNew"/>); <paramref name="classes"/> names a multiclass
    /// model's classes for the header of <c>metrics.csv</c>.
    /// </summary>
    /// <exception cref="OutputException">A file cannot be created.</exception>
    public ReplayOutputs(string directory, Func<string, Stream>? create = null, IReadOnlyList<string>? classes = null, bool served = false)
    {
        _directory = directory;
        var opened = new List<Stream>();
        try
        {
            OutputFolder.Create(directory);
            _predictions = Open("predictions.jsonl");
            _alerts = Open("alerts.jsonl");
            _deadLetters = Open("dead-letters.jsonl");
            _metrics = new StreamWriter(Open("metrics.csv"), new UTF8Encoding(false)) { NewLine = "\n" };
        }
        catch
        {
            opened.ForEach(s => s.Dispose());
            throw;
        }
        _json = new Utf8JsonWriter(_buffer, new JsonWriterOptions { SkipValidation = true, Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping });
        Guard("metrics.csv", () => _metrics.WriteLine(HeaderFor(classes, served)));

        Stream Open(string name)
        {
            var stream = OutputFile.CreateStreamed(Path.Combine(directory, name), create);
            opened.Add(stream);
            return stream;
        }
    }

    /// <summary>The files this writes, by name, in the order they are created.</summary>
    public static IReadOnlyList<string> FileNames { get; } = ["predictions.jsonl", "alerts.jsonl", "dead-letters.jsonl", "metrics.csv"];

    /// <summary>Alerts written, for the summary.</summary>
    public List<AlertTransition> AlertsWritten { get; } = [];

    /// <summary>
    /// Also hands every alert written to this webhook (it queues and returns at once); null
    /// sends none. Set before the run; the caller owns and drains the sink.
    /// </summary>
    public WebhookAlertSink? Webhook { get; set; }

    /// <summary>Writes one batch's results.</summary>
    /// <exception cref="OutputException">A file cannot be written (disk full, for one).</exception>
    public void Write(OutputBatch batch)
    {
        string file = "predictions.jsonl";
        try
        {
            WriteBatch(batch, ref file);
        }
        catch (Exception ex) when (ex is (IOException or UnauthorizedAccessException) and not OutputException)
        {
            throw new OutputException(Path.Combine(_directory, file), ex);
        }
    }

    private void WriteBatch(OutputBatch batch, ref string file)
    {
        _buffer.ResetWrittenCount();
        PredictionLines.Append(_buffer, _json, batch.Predictions);
        _predictions.Write(_buffer.WrittenSpan);

        file = "alerts.jsonl";
        foreach (var alert in batch.Alerts)
        {
            AlertsWritten.Add(alert);
            WriteLine(_alerts, w => RecordJson.WriteAlert(w, alert));
            Webhook?.Enqueue(alert);
        }
        if (batch.Alerts.Count > 0)
        {
            _alerts.Flush();
        }
        file = "dead-letters.jsonl";
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
        if (batch.DeadLetters.Count > 0)
        {
            _deadLetters.Flush();
        }
        file = "metrics.csv";
        foreach (var row in batch.Metrics)
        {
            _metrics.WriteLine(FormatMetrics(row));
        }
        if (batch.Metrics.Count > 0)
        {
            _metrics.Flush();
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
            r.LateLabels.ToString(c), r.ExpiredLabels.ToString(c))
            + (r.Classes is { } classes ? "," + F(r.ClassWiseEce) + string.Concat(classes.Select(k => "," + F(k.MeanP) + "," + F(k.ObservedRate))) : "")
            + (r.Served is { } s ? "," + F(s.LogLoss) + "," + F(s.Brier) + "," + F(s.Ece) + "," + F(s.CalibrationInTheLarge) : "");
    }

    private static string F(double v) => double.IsFinite(v) ? v.ToString("0.######", CultureInfo.InvariantCulture) : "";

    private void WriteLine(Stream file, Action<Utf8JsonWriter> write)
    {
        _buffer.ResetWrittenCount();
        _json.Reset(_buffer);
        write(_json);
        _json.Flush();
        _buffer.Write("\n"u8);
        file.Write(_buffer.WrittenSpan);
    }

    private void Guard(string name, Action write)
    {
        try
        {
            write();
        }
        catch (Exception ex) when (ex is (IOException or UnauthorizedAccessException) and not OutputException)
        {
            throw new OutputException(Path.Combine(_directory, name), ex);
        }
    }

    /// <summary>Flushes and closes every file (on a failed flush, the others are still closed).</summary>
    /// <exception cref="OutputException">The last buffered bytes of a file could not be written.</exception>
    public void Close()
    {
        _json.Dispose();
        OutputException? failure = null;
        foreach (var (name, stream) in new (string, IDisposable)[] { ("predictions.jsonl", _predictions), ("alerts.jsonl", _alerts), ("dead-letters.jsonl", _deadLetters), ("metrics.csv", _metrics) })
        {
            try
            {
                Guard(name, stream.Dispose);
            }
            catch (OutputException ex)
            {
                failure ??= ex;
            }
        }
        if (failure is not null)
        {
            throw failure;
        }
    }

    /// <inheritdoc />
    public void Dispose()
    {
        try
        {
            Close();
        }
        catch (OutputException)
        {
            // Dispose runs after a failure has already been reported; Close reports its own.
        }
    }
}
