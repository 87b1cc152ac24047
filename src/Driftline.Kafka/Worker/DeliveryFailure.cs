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

    /// <summary>Sees every delivery report (the latency benchmark), or null.</summary>
    public IRecordProbe? Probe { get; set; }

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

    /// <summary>
    /// Produces <paramref name="message"/> in the current epoch, counted before it is handed
    /// over so the epoch never looks acknowledged while it is in flight. A full send queue is
    /// backpressure: wait for the broker to take some (counted in <c>ProduceWaits</c>) and retry.
    /// </summary>
    public void Produce(IProducer<byte[]?, byte[]> producer, string topic, Message<byte[]?, byte[]> message, OutputCounts counts)
    {
        var epoch = Current;
        epoch.Sending();
        while (true)
        {
            try
            {
                producer.Produce(topic, message, epoch.Handler);
                return;
            }
            catch (ProduceException<byte[]?, byte[]> ex) when (ex.Error.Code == ErrorCode.Local_QueueFull)
            {
                counts.ProduceWaits++;
                Thread.Sleep(5);
            }
            catch
            {
                epoch.NotSent();
                throw;
            }
        }
    }

    /// <summary>Keeps the first failure.</summary>
    public void Record(DeliveryReport<byte[]?, byte[]> report) =>
        Interlocked.CompareExchange(ref _error, $"delivery to {report.Topic} failed: {report.Error.Reason} ({report.Error.Code})", null);
}
