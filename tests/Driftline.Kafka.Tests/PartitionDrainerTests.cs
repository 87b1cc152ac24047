using System.Text;
using Confluent.Kafka;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Kafka.Options;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>
/// The drainer's sharing of a batch between the pool and the loop thread: every partition is
/// drained once, by one thread, and a fault ends the batch and is reported.
/// </summary>
public sealed class PartitionDrainerTests
{
    private static readonly KafkaOptions Options = new() { EventsTopic = "pd-events" };

    [Fact]
    public void Finish_LoopHelpsWithTheBatch_EveryPartitionDrainedOnceAndCounted()
    {
        using var cluster = new MockCluster();
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = cluster.Bootstrap }).Build();
        var partitions = Enumerable.Range(0, 8).Select(p => Partition(producer, p, events: 300)).ToList();
        var drainer = new PartitionDrainer(Options);

        drainer.Start(partitions);
        Assert.True(drainer.InFlight);
        var (drained, done) = drainer.Finish();

        Assert.False(drainer.InFlight);
        Assert.Same(partitions, drained);
        Assert.Equal(8 * 300, done);
        Assert.All(partitions, s =>
        {
            Assert.Empty(s.Events);
            Assert.Equal(300, s.EventsNext);
            Assert.Equal(300, s.Engine.Counters.Events); // each record through its engine once
        });
        var (again, none) = drainer.Finish();
        Assert.Empty(again);
        Assert.Equal(0, none);
    }

    [Fact]
    public void Finish_APartitionFails_RethrowsAndCollectsTheBatch()
    {
        using var cluster = new MockCluster();
        using var producer = new ProducerBuilder<byte[]?, byte[]>(new ProducerConfig { BootstrapServers = cluster.Bootstrap }).Build();
        var partitions = Enumerable.Range(0, 4).Select(p => Partition(producer, p, events: 50)).ToList();
        // A partition with no processor fails on its first record, whichever thread takes it.
        var broken = new PartitionState(9, new ScoringEngine(new DriftlineOptions(), new NullSink()), checkpoint: null, hasLabels: false);
        broken.Events.Enqueue(new BufferedRecord(0, 0, null, Encoding.UTF8.GetBytes("{\"id\":\"x\"}")));
        partitions.Insert(2, broken);
        var drainer = new PartitionDrainer(Options);

        drainer.Start(partitions);
        Assert.Throws<NullReferenceException>(() => drainer.Finish());

        Assert.False(drainer.InFlight);
        Assert.Empty(drainer.Finish().Drained);
    }

    private static PartitionState Partition(IProducer<byte[]?, byte[]> producer, int partition, int events)
    {
        var counts = new OutputCounts();
        var outputs = new KafkaOutputs(producer, "pd-predictions", null, "pd-dead", counts, new DeliveryFailure());
        var state = new PartitionState(partition, new ScoringEngine(new DriftlineOptions(), outputs), checkpoint: null, hasLabels: false)
        {
            Processor = new RecordProcessor(outputs, counts, new Driftline.Core.Options.InputOptions()),
            Counts = counts,
        };
        for (int i = 0; i < events; i++)
        {
            state.Events.Enqueue(new BufferedRecord(i, i, null, Encoding.UTF8.GetBytes($"{{\"id\":\"p{partition}-{i}\",\"features\":{{\"zone\":\"north\",\"items\":{i % 5}}}}}")));
        }
        return state;
    }
}
