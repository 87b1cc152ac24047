using Confluent.Kafka;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The first failed delivery of any output, shared by every partition's sinks and read by
/// the loop before each commit: a lost prediction must stop the worker before its offset is
/// committed. Also hands out the <see cref="DeliveryEpoch"/> outputs are counted in, so a
/// checkpoint can wait for exactly the outputs before its cut. Delivery reports arrive on
/// librdkafka's poll thread.
/// </summary>
internal sealed class DeliveryFailure
{
    private string? _error;
    private DeliveryEpoch _current;

    /// <summary>Creates the holder and its first epoch.</summary>
    public DeliveryFailure() => _current = new DeliveryEpoch(this);

    /// <summary>The first failure, or null.</summary>
    public string? Error => Volatile.Read(ref _error);

    /// <summary>The epoch outputs are produced in now (read by the partitions' threads).</summary>
    public DeliveryEpoch Current => Volatile.Read(ref _current);

    /// <summary>
    /// Starts a new epoch and returns the sealed one before it. Called by the loop while the
    /// engines are idle, so no output is being produced across the cut.
    /// </summary>
    public DeliveryEpoch Cut()
    {
        var sealedEpoch = Interlocked.Exchange(ref _current, new DeliveryEpoch(this));
        sealedEpoch.Seal();
        return sealedEpoch;
    }

    /// <summary>Keeps the first failure.</summary>
    public void Record(DeliveryReport<byte[]?, byte[]> report) =>
        Interlocked.CompareExchange(ref _error, $"delivery to {report.Topic} failed: {report.Error.Reason} ({report.Error.Code})", null);
}
