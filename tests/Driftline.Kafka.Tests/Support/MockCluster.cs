using Confluent.Kafka;

namespace Driftline.Kafka.Tests.Support;

/// <summary>
/// librdkafka's in-process mock cluster (three brokers on 127.0.0.1), alive while this
/// object lives. Topics are created on first produce with <see cref="Partitions"/> partitions.
/// </summary>
internal sealed class MockCluster : IDisposable
{
    /// <summary>Partitions of every auto-created topic on the mock.</summary>
    public const int Partitions = 4;

    private readonly IProducer<byte[]?, byte[]> _host;

    /// <summary>Starts the cluster; <paramref name="roundTripMs"/> delays every broker response (librdkafka's test.mock.broker.rtt).</summary>
    public MockCluster(int roundTripMs = 0)
    {
        var config = new ProducerConfig();
        config.Set("test.mock.num.brokers", "3");
        if (roundTripMs > 0)
        {
            config.Set("test.mock.broker.rtt", roundTripMs.ToString(System.Globalization.CultureInfo.InvariantCulture));
        }
        _host = new ProducerBuilder<byte[]?, byte[]>(config).SetLogHandler((_, _) => { }).Build();
        using var admin = new DependentAdminClientBuilder(_host.Handle).Build();
        var metadata = admin.GetMetadata(TimeSpan.FromSeconds(10));
        Bootstrap = string.Join(",", metadata.Brokers.Select(b => $"{b.Host}:{b.Port}"));
    }

    /// <summary>The brokers' addresses, for other clients and processes.</summary>
    public string Bootstrap { get; }

    /// <summary>
    /// Makes a topic of <paramref name="partitions"/> partitions. The mock answers no admin
    /// CreateTopics (it has no controller), so this calls librdkafka's own
    /// <c>rd_kafka_mock_topic_create</c> on the cluster this object started.
    /// </summary>
    public void CreateTopic(string topic, int partitions)
    {
        int error = Native.Value.TopicCreate(Handle(), topic, partitions, 1);
        if (error != 0)
        {
            throw new InvalidOperationException($"rd_kafka_mock_topic_create({topic}, {partitions}) returned {error}");
        }
    }

    /// <summary>
    /// How long the mock's classic group waits for more members at a group's first join (a
    /// broker's group.initial.rebalance.delay.ms; the mock's default is 3 s).
    /// </summary>
    public void InitialRebalanceDelay(int milliseconds) => Native.Value.InitialDelay(Handle(), milliseconds);

    /// <summary>
    /// The session timeout of consumer-protocol (KIP-848) groups, which the broker sets, not the
    /// client (a broker's group.consumer.session.timeout.ms; 45 s by default).
    /// </summary>
    public void ConsumerSessionTimeout(int milliseconds) => Native.Value.ConsumerSessionTimeout(Handle(), milliseconds);

    /// <summary>
    /// Takes broker <paramref name="id"/> (1 to 3) down or back up: librdkafka's
    /// <c>rd_kafka_mock_broker_set_down</c> closes its connections and refuses new ones, as a
    /// broker that crashed; <c>rd_kafka_mock_broker_set_up</c> lets clients in again.
    /// </summary>
    public void SetBroker(int id, bool up)
    {
        int error = up ? Native.Value.BrokerUp(Handle(), id) : Native.Value.BrokerDown(Handle(), id);
        if (error != 0)
        {
            throw new InvalidOperationException($"rd_kafka_mock_broker_set_{(up ? "up" : "down")}({id}) returned {error}");
        }
    }

    /// <summary>Every broker of the cluster down (<paramref name="up"/> false) or up.</summary>
    public void SetAllBrokers(bool up)
    {
        for (int id = 1; id <= 3; id++)
        {
            SetBroker(id, up);
        }
    }

    private IntPtr Handle()
    {
        // Confluent.Kafka keeps the librdkafka handle internal; the test reaches it by name.
        var property = typeof(Confluent.Kafka.Handle).GetProperty("LibrdkafkaHandle", System.Reflection.BindingFlags.Instance | System.Reflection.BindingFlags.NonPublic)
            ?? throw new InvalidOperationException("Confluent.Kafka no longer has Handle.LibrdkafkaHandle");
        var safe = (System.Runtime.InteropServices.SafeHandle)property.GetValue(_host.Handle)!;
        return Native.Value.ClusterHandle(safe.DangerousGetHandle());
    }

    private static readonly Lazy<MockApi> Native = new(() =>
    {
        // The variant Confluent.Kafka loaded (it picks one per Linux flavour), found in the process's own map.
        string path = File.ReadLines("/proc/self/maps").Select(l => l.Split(' ', StringSplitOptions.RemoveEmptyEntries)).Where(f => f.Length >= 6 && f[5].EndsWith("librdkafka.so", StringComparison.Ordinal)).Select(f => f[5]).First();
        IntPtr library = System.Runtime.InteropServices.NativeLibrary.Load(path);
        return new MockApi(
            System.Runtime.InteropServices.Marshal.GetDelegateForFunctionPointer<ClusterHandleFn>(System.Runtime.InteropServices.NativeLibrary.GetExport(library, "rd_kafka_handle_mock_cluster")),
            System.Runtime.InteropServices.Marshal.GetDelegateForFunctionPointer<TopicCreateFn>(System.Runtime.InteropServices.NativeLibrary.GetExport(library, "rd_kafka_mock_topic_create")),
            System.Runtime.InteropServices.Marshal.GetDelegateForFunctionPointer<SetIntFn>(System.Runtime.InteropServices.NativeLibrary.GetExport(library, "rd_kafka_mock_group_initial_rebalance_delay_ms")),
            System.Runtime.InteropServices.Marshal.GetDelegateForFunctionPointer<SetIntFn>(System.Runtime.InteropServices.NativeLibrary.GetExport(library, "rd_kafka_mock_set_group_consumer_session_timeout_ms")),
            System.Runtime.InteropServices.Marshal.GetDelegateForFunctionPointer<BrokerFn>(System.Runtime.InteropServices.NativeLibrary.GetExport(library, "rd_kafka_mock_broker_set_down")),
            System.Runtime.InteropServices.Marshal.GetDelegateForFunctionPointer<BrokerFn>(System.Runtime.InteropServices.NativeLibrary.GetExport(library, "rd_kafka_mock_broker_set_up")));
    });

    private delegate IntPtr ClusterHandleFn(IntPtr rk);

    private delegate int TopicCreateFn(IntPtr mcluster, [System.Runtime.InteropServices.MarshalAs(System.Runtime.InteropServices.UnmanagedType.LPUTF8Str)] string topic, int partitions, int replicationFactor);

    private delegate void SetIntFn(IntPtr mcluster, int value);

    private delegate int BrokerFn(IntPtr mcluster, int brokerId);

    private sealed record MockApi(ClusterHandleFn ClusterHandle, TopicCreateFn TopicCreate, SetIntFn InitialDelay, SetIntFn ConsumerSessionTimeout, BrokerFn BrokerDown, BrokerFn BrokerUp);

    public void Dispose() => _host.Dispose();
}
