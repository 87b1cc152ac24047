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
/// A challenger's outputs on one partition: its probabilities go to <c>Kafka:ChallengerTopic</c>
/// when one is named (nowhere otherwise), its own alert rules only to the debug log (the
/// champion's alerts are the ones acted on; the challenger's verdict is the
/// <c>challenger-better</c> line), and its metrics rows are kept for <c>/metrics</c>.
/// </summary>
internal sealed class ChallengerSink : IScoringSink
{
    /// <summary>Header naming the challenger on each message of the challenger topic.</summary>
    public const string HeaderName = "challenger";

    private static readonly JsonWriterOptions WriterOptions = new() { SkipValidation = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };

    private readonly string _name;
    private readonly IProducer<byte[]?, byte[]>? _producer;
    private readonly string? _topic;
    private readonly DeliveryFailure _failure;
    private readonly OutputCounts _counts;
    private readonly byte[] _header;
    private readonly ArrayBufferWriter<byte> _buffer = new(1024);
    private readonly Utf8JsonWriter _json;

    /// <summary>Creates the sink of challenger <paramref name="name"/>; <paramref name="topic"/> null publishes nothing.</summary>
    public ChallengerSink(string name, IProducer<byte[]?, byte[]>? producer, string? topic, DeliveryFailure failure, OutputCounts counts)
    {
        _name = name;
        _producer = producer;
        _topic = topic;
        _failure = failure;
        _counts = counts;
        _header = Encoding.UTF8.GetBytes(name);
        _json = new Utf8JsonWriter(_buffer, WriterOptions);
    }

    /// <summary>The challenger's latest metrics row on this partition, or null before the first.</summary>
    public MetricsRow? LastMetrics { get; private set; }

    /// <inheritdoc />
    public void OnPrediction(in Prediction prediction)
    {
        if (_topic is null || _producer is null)
        {
            return;
        }
        _buffer.ResetWrittenCount();
        PredictionLines.Append(_buffer, _json, new ReadOnlySpan<Prediction>(in prediction));
        var message = new Message<byte[]?, byte[]>
        {
            Key = Encoding.UTF8.GetBytes(prediction.Key),
            Value = _buffer.WrittenSpan[..^1].ToArray(),
            Headers = [new Header(HeaderName, _header)],
        };
        // The same delivery accounting and backpressure as the champion's outputs.
        _failure.Produce(_producer, _topic, message, _counts);
    }

    /// <inheritdoc />
    public void OnAlert(AlertTransition alert) =>
        Log.Debug("Challenger {Challenger}: its own alert {Rule} {State}: {Message}", _name, alert.Rule, alert.Raised ? "raised" : "cleared", RecordJson.Describe(alert));

    /// <inheritdoc />
    public void OnMetrics(in MetricsRow row) => LastMetrics = row;
}
