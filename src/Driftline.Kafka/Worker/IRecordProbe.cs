using Confluent.Kafka;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Sees each record at the worker's stage boundaries (consumed, taken by its engine, done,
/// its outputs acknowledged), so the latency benchmark can say where an event's time goes.
/// None in production: each boundary costs one null check. Calls come from the loop thread,
/// the drain threads and librdkafka's delivery thread, and must not block.
/// </summary>
internal interface IRecordProbe
{
    /// <summary>The loop thread's consumer returned the record (not yet queued on its partition).</summary>
    void Consumed(bool fromLabels, int partition, long offset, ReadOnlySpan<byte> value);

    /// <summary>A drain thread is about to run the record through its partition's engine.</summary>
    void Draining(bool fromLabels, int partition, in BufferedRecord record);

    /// <summary>The engine and the sinks are done with the record (its outputs handed to the producer).</summary>
    void Drained(bool fromLabels, int partition, in BufferedRecord record);

    /// <summary>The broker answered for an output (on librdkafka's delivery thread).</summary>
    void Delivered(DeliveryReport<byte[]?, byte[]> report);
}
