using System.Net;
using System.Net.Sockets;
using Driftline.Cli;
using Driftline.Configuration;
using Driftline.Core.Options;
using Driftline.Kafka.Options;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class MetricsEndpointTests
{
    [Fact]
    public async Task Start_WorkerCounts_ServedInPrometheusTextAndHealthFollowsTheLoop()
    {
        using var dir = new TempDir();
        var worker = IdleWorker(dir);
        worker.Stats.EventsIn = 1234;
        worker.Stats.Partitions = 3;
        worker.Stats.Pauses = 4321;
        int port = FreePort();
        using var endpoint = MetricsEndpoint.Start(new WorkerOptions { MetricsPort = port }, worker);
        Assert.NotNull(endpoint);
        using var http = new HttpClient { BaseAddress = new Uri($"http://127.0.0.1:{port}") };
        var token = TestContext.Current.CancellationToken;

        string metrics = await http.GetStringAsync(new Uri("/metrics", UriKind.Relative), token);
        // Prometheus naming (common practice, the Prometheus naming guide): _total on counters, _seconds on times.
        Assert.Contains("driftline_events_in_total 1234", metrics, StringComparison.Ordinal);
        Assert.Contains("# TYPE driftline_events_in_total counter", metrics, StringComparison.Ordinal);
        Assert.Contains("driftline_checkpoint_age_seconds", metrics, StringComparison.Ordinal);
        Assert.Contains("driftline_partitions", metrics, StringComparison.Ordinal);
        Assert.Contains("driftline_backpressure_pauses_total 4321", metrics, StringComparison.Ordinal);

        using (var stopped = await http.GetAsync(new Uri("/health", UriKind.Relative), token))
        {
            Assert.Equal(HttpStatusCode.ServiceUnavailable, stopped.StatusCode);
        }
        worker.Stats.Running = true;
        using (var connecting = await http.GetAsync(new Uri("/health", UriKind.Relative), token))
        {
            // The loop runs, but no broker has answered: not ready.
            Assert.Equal(HttpStatusCode.ServiceUnavailable, connecting.StatusCode);
        }
        worker.Stats.BrokerReachable = true;
        worker.Stats.GroupJoined = true;
        using var running = await http.GetAsync(new Uri("/health", UriKind.Relative), token);
        Assert.Equal(HttpStatusCode.OK, running.StatusCode);
        Assert.Contains("\"partitions\":3", await running.Content.ReadAsStringAsync(token), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Start_Challengers_EachServedWithItsNameAndPartitionAsLabels()
    {
        using var dir = new TempDir();
        var worker = IdleWorker(dir);
        worker.Stats.Challengers[("fast", 2)] = new ChallengerFigures(0.52, 0.47, 0.031, 0.012, 2.5, 4.605, 1_200, 1);
        worker.Stats.Challengers[("wide", 0)] = new ChallengerFigures(0.5, 0.55, 0.02, 0.04, 0, 4.605, 900, 0);
        worker.Stats.ChallengerDecisions = 1;
        int port = FreePort();
        using var endpoint = MetricsEndpoint.Start(new WorkerOptions { MetricsPort = port }, worker);
        using var http = new HttpClient { BaseAddress = new Uri($"http://127.0.0.1:{port}") };

        string metrics = await http.GetStringAsync(new Uri("/metrics", UriKind.Relative), TestContext.Current.CancellationToken);
        Assert.Contains("driftline_challenger_log_loss{challenger=\"fast\",partition=\"2\"} 0.47", metrics, StringComparison.Ordinal);
        Assert.Contains("driftline_challenger_champion_log_loss{challenger=\"fast\",partition=\"2\"} 0.52", metrics, StringComparison.Ordinal);
        Assert.Contains("driftline_challenger_ece{challenger=\"wide\",partition=\"0\"} 0.04", metrics, StringComparison.Ordinal);
        Assert.Contains("driftline_challenger_champion_ece{challenger=\"fast\",partition=\"2\"} 0.031", metrics, StringComparison.Ordinal);
        Assert.Contains("driftline_challenger_evidence{challenger=\"fast\",partition=\"2\"} 2.5", metrics, StringComparison.Ordinal);
        Assert.Contains("driftline_challenger_decisions_total 1", metrics, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Start_ChallengerPartitionGivenUp_ItsSeriesLeaveTheNextScrape()
    {
        using var dir = new TempDir();
        var worker = IdleWorker(dir);
        worker.Stats.Challengers[("fast", 2)] = new ChallengerFigures(0.52, 0.47, 0.031, 0.012, 2.5, 4.605, 1_200, 1);
        worker.Stats.Challengers[("fast", 5)] = new ChallengerFigures(0.5, 0.55, 0.02, 0.04, 0, 4.605, 900, 0);
        int port = FreePort();
        using var endpoint = MetricsEndpoint.Start(new WorkerOptions { MetricsPort = port }, worker);
        using var http = new HttpClient { BaseAddress = new Uri($"http://127.0.0.1:{port}") };
        var token = TestContext.Current.CancellationToken;
        string before = await http.GetStringAsync(new Uri("/metrics", UriKind.Relative), token);
        Assert.Contains("driftline_challenger_log_loss{challenger=\"fast\",partition=\"5\"} 0.55", before, StringComparison.Ordinal);

        // Partition 5 moved to another member (the worker drops its figures): a series still
        // served here would show two owners' values for one partition, the old one frozen.
        worker.Stats.Challengers.TryRemove(("fast", 5), out _);
        string after = await http.GetStringAsync(new Uri("/metrics", UriKind.Relative), token);
        Assert.DoesNotContain("partition=\"5\"", after, StringComparison.Ordinal);
        Assert.Contains("driftline_challenger_log_loss{challenger=\"fast\",partition=\"2\"} 0.47", after, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("*")]
    [InlineData("0.0.0.0")]
    public async Task Start_AllInterfaces_ServesOnLoopbackToo(string address)
    {
        using var dir = new TempDir();
        var worker = IdleWorker(dir);
        int port = FreePort();
        using var endpoint = MetricsEndpoint.Start(new WorkerOptions { MetricsAddress = address, MetricsPort = port }, worker);
        Assert.NotNull(endpoint);
        using var http = new HttpClient { BaseAddress = new Uri($"http://127.0.0.1:{port}") };
        var token = TestContext.Current.CancellationToken;
        string metrics = await http.GetStringAsync(new Uri("/metrics", UriKind.Relative), token);
        Assert.Contains("driftline_events_in", metrics, StringComparison.Ordinal);
        using var health = await http.GetAsync(new Uri("/health", UriKind.Relative), token);
        Assert.Equal(HttpStatusCode.ServiceUnavailable, health.StatusCode);
    }

    [Fact]
    public void Start_PortTaken_ThrowsNamingTheOptions()
    {
        using var dir = new TempDir();
        var worker = IdleWorker(dir);
        using var taken = new TcpListener(IPAddress.Loopback, 0);
        taken.Start();
        int port = ((IPEndPoint)taken.LocalEndpoint).Port;
        var ex = Assert.Throws<MetricsEndpointException>(() => MetricsEndpoint.Start(new WorkerOptions { MetricsPort = port }, worker));
        Assert.Contains("Worker:MetricsPort", ex.Message, StringComparison.Ordinal);
    }

    private static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    // A worker that is never started: the endpoint serves whatever its stats hold.
    private static KafkaWorker IdleWorker(TempDir dir) =>
        new(new KafkaOptions { Bootstrap = "127.0.0.1:9", CheckpointDir = dir.Path }, new DriftlineOptions());
}
