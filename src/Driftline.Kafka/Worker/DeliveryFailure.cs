using Confluent.Kafka;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The first failed delivery of any output, shared by every partition's sinks and read by
/// the loop before each commit: a lost prediction must stop the worker before its offset is
/// committed. Delivery reports arrive on librdkafka's poll thread.
/// </summary>
internal sealed class DeliveryFailure
{
    private string? _error;

    /// <summary>The first failure, or null.</summary>
    public string? Error => Volatile.Read(ref _error);

    /// <summary>The handler every message is produced with (one delegate, no closure per message).</summary>
    public Action<DeliveryReport<byte[]?, byte[]>> Handler { get; }

    /// <summary>Creates the holder and its handler.</summary>
    public DeliveryFailure()
    {
        Handler = report =>
        {
            if (report.Error.IsError)
            {
                Interlocked.CompareExchange(ref _error, $"delivery to {report.Topic} failed: {report.Error.Reason} ({report.Error.Code})", null);
            }
        };
    }
}
