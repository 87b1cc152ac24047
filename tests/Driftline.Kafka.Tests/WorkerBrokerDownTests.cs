using System.Net;
using System.Net.Sockets;
using Driftline.Cli;
using Driftline.Configuration;
using Driftline.Kafka.Tests.Support;
using Driftline.Kafka.Worker;
using Serilog.Events;
using Xunit;

namespace Driftline.Kafka.Tests;

/// <summary>Issue 14 item 12: an unreachable broker logs a line per back-off interval, /health waits for the broker, and Worker:ExitAfterBrokerDown stops the worker.</summary>
public sealed class WorkerBrokerDownTests
{
    [Fact]
    public void Run_BrokerUnreachable_LogsOneLinePerBackOffIntervalWithACount()
    {
        // Before: every attempt of every client, twice (librdkafka's log and its error
        // callback), about 50 lines a second against a closed port.
        int port = ClosedPort();
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor($"127.0.0.1:{port}", "down-log", dir.Path);
        options.LabelsTopic = null; // the co-partitioning check would stop the worker after its metadata time-out
        options.Client["reconnect.backoff.max.ms"] = "1000";
        using var log = new LogCapture();
        var watched = TimeSpan.FromSeconds(6);
        string address = $"127.0.0.1:{port}";
        List<string> lines;
        using (var host = new WorkerHost(options))
        {
            Thread.Sleep(watched);
            // Counted before the stop, whose own time is not part of the watched stretch.
            lines = log.Messages(LogEventLevel.Warning).Concat(log.Messages(LogEventLevel.Error))
                .Where(m => m.Contains(address, StringComparison.Ordinal)).ToList();
            Assert.Null(host.Failure);
            Assert.False(host.Worker.Stats.Healthy, "healthy with no broker");
        }
        TestContext.Current.SendDiagnosticMessage($"{lines.Count} lines in {watched.TotalSeconds} s:\n{string.Join('\n', lines)}");
        // One line when the errors start, then at most one a second (the back-off maximum), plus one of slack for the timing.
        Assert.InRange(lines.Count, 2, (int)watched.TotalSeconds + 2);
        Assert.Contains(lines, l => System.Text.RegularExpressions.Regex.IsMatch(l, @"\d+ connection errors in the last \d+ s"));
    }

    [Fact]
    public async Task Health_BrokersReachableThenDownThenBack_200OnlyWhileTheGroupIsJoinedAndABrokerUp()
    {
        using var cluster = new MockCluster();
        Topics.ProduceStream(cluster.Bootstrap, "hd-events", "hd-labels", TestStream.Generate(200, keys: 4));
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "hd", dir.Path);
        options.Client["reconnect.backoff.max.ms"] = "500";
        using var host = new WorkerHost(options);
        int port = FreePort();
        using var endpoint = MetricsEndpoint.Start(new WorkerOptions { MetricsPort = port }, host.Worker);
        using var http = new HttpClient { BaseAddress = new Uri($"http://127.0.0.1:{port}"), Timeout = TimeSpan.FromSeconds(5) };

        Assert.Contains("\"running\"", await WaitForHealth(http, HttpStatusCode.OK, TimeSpan.FromSeconds(60)), StringComparison.Ordinal);
        cluster.SetAllBrokers(up: false);
        Assert.Contains("\"broker-down\"", await WaitForHealth(http, HttpStatusCode.ServiceUnavailable, TimeSpan.FromSeconds(30)), StringComparison.Ordinal);
        cluster.SetAllBrokers(up: true);
        Assert.Contains("\"running\"", await WaitForHealth(http, HttpStatusCode.OK, TimeSpan.FromSeconds(60)), StringComparison.Ordinal);
        Assert.Null(host.Failure);
    }

    [Fact]
    public async Task Health_LoopRunsButNoBrokerAnswers_503Connecting()
    {
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor($"127.0.0.1:{ClosedPort()}", "hc", dir.Path);
        options.LabelsTopic = null;
        using var host = new WorkerHost(options);
        host.WaitFor(s => s.Running, TimeSpan.FromSeconds(30));
        int port = FreePort();
        using var endpoint = MetricsEndpoint.Start(new WorkerOptions { MetricsPort = port }, host.Worker);
        using var http = new HttpClient { BaseAddress = new Uri($"http://127.0.0.1:{port}"), Timeout = TimeSpan.FromSeconds(5) };
        // Before: 200 "running" as soon as the loop ran, broker or not.
        for (int i = 0; i < 3; i++)
        {
            using var health = await http.GetAsync(new Uri("/health", UriKind.Relative), TestContext.Current.CancellationToken);
            Assert.Equal(HttpStatusCode.ServiceUnavailable, health.StatusCode);
            Assert.Contains("\"connecting\"", await health.Content.ReadAsStringAsync(TestContext.Current.CancellationToken), StringComparison.Ordinal);
            await Task.Delay(1000, TestContext.Current.CancellationToken);
        }
    }

    [Fact]
    public void Run_BrokersDownLongerThanExitAfterBrokerDown_StopsWithBrokerDown()
    {
        using var cluster = new MockCluster();
        Topics.ProduceStream(cluster.Bootstrap, "xd-events", "xd-labels", TestStream.Generate(200, keys: 4));
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "xd", dir.Path);
        var limit = TimeSpan.FromSeconds(3);
        using var host = new WorkerHost(options, exitAfterBrokerDown: limit);
        host.WaitFor(s => s.Healthy && s.Predictions == 200, TimeSpan.FromSeconds(60));
        var down = DateTime.UtcNow;
        cluster.SetAllBrokers(up: false);
        var failure = Assert.IsType<KafkaWorkerException>(host.WaitForFailure(TimeSpan.FromSeconds(60)));
        var after = DateTime.UtcNow - down;
        TestContext.Current.SendDiagnosticMessage($"stopped {after.TotalSeconds:0.0} s after the brokers went down: {failure.Message}");
        Assert.True(failure.BrokerDown, failure.Message);
        Assert.Contains("Worker:ExitAfterBrokerDown", failure.Message, StringComparison.Ordinal);
        Assert.True(after >= limit - TimeSpan.FromSeconds(1), $"stopped after {after}, before the limit"); // the last contact is at most one statistics interval (1 s) old
    }

    [Fact]
    public async Task Run_ExitAfterBrokerDownAndNoBroker_ExitsWithTheBrokerDownCodeAndOneLine()
    {
        using var dir = new TempDir();
        var env = new Dictionary<string, string?>
        {
            ["DRIFTLINE_Worker__ExitAfterBrokerDown"] = "00:00:02",
            ["DRIFTLINE_Worker__MetricsPort"] = "0",
        };
        var output = new StringWriter();
        var error = new StringWriter();
        var context = new CommandContext(output, error, env, () => new MemoryStream());
        using var limit = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
        limit.CancelAfter(TimeSpan.FromSeconds(60));
        int code = await DriftlineCli.RunAsync(["run", "--bootstrap", $"127.0.0.1:{ClosedPort()}", "--checkpoint-dir", dir.Path], context, limit.Token);
        Assert.False(limit.IsCancellationRequested, "the worker did not stop by itself");
        Assert.True(code == ExitCode.BrokerDown, error.ToString());
        var line = Assert.Single(error.ToString().Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains("Worker:ExitAfterBrokerDown", line, StringComparison.Ordinal);
    }

    private static async Task<string> WaitForHealth(HttpClient http, HttpStatusCode wanted, TimeSpan limit)
    {
        var deadline = DateTime.UtcNow + limit;
        string last = "";
        while (DateTime.UtcNow < deadline)
        {
            using var health = await http.GetAsync(new Uri("/health", UriKind.Relative), TestContext.Current.CancellationToken);
            last = await health.Content.ReadAsStringAsync(TestContext.Current.CancellationToken);
            if (health.StatusCode == wanted)
            {
                return last;
            }
            await Task.Delay(100, TestContext.Current.CancellationToken);
        }
        throw new TimeoutException($"/health did not answer {wanted} within {limit}; last: {last}");
    }

    /// <summary>A loopback port nothing listens on (taken from the system, then released).</summary>
    private static int ClosedPort() => FreePort();

    private static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }
}
