using System.Text;
using System.Text.Json;
using Driftline.Cli;
using Driftline.Demo;
using Driftline.Kafka.Tests.Support;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class RunCommandTests
{
    [Fact]
    public async Task Run_NoBootstrap_ScoresStandardInputToStandardOutput()
    {
        var records = TestStream.Generate(300, keys: 2, seed: 4);
        var input = string.Join("\n", records.OrderBy(r => r.TimestampMs).Select(r => r.Value)) + "\n{broken\n";
        var (code, output, error) = await RunAsync(["run"], stdin: input);
        Assert.Equal(ExitCode.Ok, code);
        var lines = output.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(300, lines.Length);
        Assert.All(lines, l => Assert.InRange(JsonDocument.Parse(l).RootElement.GetProperty("p").GetDouble(), 0, 1));
        Assert.DoesNotContain("driftline:", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_UnknownKafkaOption_NamesItAndExitsWithConfig()
    {
        using var dir = new TempDir();
        string config = Path.Combine(dir.Path, "c.json");
        File.WriteAllText(config, "{\"Kafka\":{\"Bootstrapp\":\"127.0.0.1:9\"}}");
        var (code, _, error) = await RunAsync(["run", "--config", config]);
        Assert.Equal(ExitCode.Config, code);
        Assert.Contains("Bootstrapp", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_MetricsPortTaken_ExitsWithConfigNamingTheOption()
    {
        using var dir = new TempDir();
        using var taken = new System.Net.Sockets.TcpListener(System.Net.IPAddress.Loopback, 0);
        taken.Start();
        int port = ((System.Net.IPEndPoint)taken.LocalEndpoint).Port;
        var env = new Dictionary<string, string?> { ["DRIFTLINE_Worker__MetricsPort"] = port.ToString(System.Globalization.CultureInfo.InvariantCulture) };
        var (code, _, error) = await RunAsync(["run", "--bootstrap", "127.0.0.1:9", "--checkpoint-dir", dir.Path], env);
        Assert.True(code == ExitCode.Config, error);
        var line = Assert.Single(error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains("Worker:MetricsPort", line, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_PlainHttpWebhook_WarnsOnceAtStart()
    {
        // Issue 12 item 13. The metrics port is taken, so the worker stops right after start-up.
        using var dir = new TempDir();
        using var taken = new System.Net.Sockets.TcpListener(System.Net.IPAddress.Loopback, 0);
        taken.Start();
        int port = ((System.Net.IPEndPoint)taken.LocalEndpoint).Port;
        string host = $"alerts-{Guid.NewGuid():N}.example.com";
        var env = new Dictionary<string, string?>
        {
            ["DRIFTLINE_Worker__MetricsPort"] = port.ToString(System.Globalization.CultureInfo.InvariantCulture),
            ["DRIFTLINE_Webhook__Url"] = $"http://{host}/hook?token=abc",
        };
        using var log = new LogCapture();
        var (code, _, error) = await RunAsync(["run", "--bootstrap", "127.0.0.1:9", "--checkpoint-dir", dir.Path], env);
        Assert.True(code == ExitCode.Config, error);
        var warning = Assert.Single(log.Messages(Serilog.Events.LogEventLevel.Warning), m => m.Contains(host, StringComparison.Ordinal));
        Assert.Contains("plain http://", warning, StringComparison.Ordinal);
        Assert.DoesNotContain("token=abc", warning, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_HttpsWebhook_NoWarning()
    {
        using var dir = new TempDir();
        using var taken = new System.Net.Sockets.TcpListener(System.Net.IPAddress.Loopback, 0);
        taken.Start();
        int port = ((System.Net.IPEndPoint)taken.LocalEndpoint).Port;
        string host = $"alerts-{Guid.NewGuid():N}.example.com";
        var env = new Dictionary<string, string?>
        {
            ["DRIFTLINE_Worker__MetricsPort"] = port.ToString(System.Globalization.CultureInfo.InvariantCulture),
            ["DRIFTLINE_Webhook__Url"] = $"https://{host}/hook",
        };
        using var log = new LogCapture();
        var (code, _, error) = await RunAsync(["run", "--bootstrap", "127.0.0.1:9", "--checkpoint-dir", dir.Path], env);
        Assert.True(code == ExitCode.Config, error);
        Assert.DoesNotContain(log.Messages(Serilog.Events.LogEventLevel.Warning), m => m.Contains(host, StringComparison.Ordinal));
    }

    [Fact]
    public async Task Run_AutoCommitTurnedOn_IsRefusedWithTheFix()
    {
        var env = new Dictionary<string, string?> { ["DRIFTLINE_Kafka__Client__enable.auto.commit"] = "true" };
        var (code, _, error) = await RunAsync(["run", "--bootstrap", "127.0.0.1:9"], env);
        Assert.Equal(ExitCode.Config, code);
        Assert.Contains("Kafka:Client:enable.auto.commit", error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_ClientSettingTheClientRejects_ExitsKafkaWithOneClearMessage()
    {
        using var dir = new TempDir();
        var env = new Dictionary<string, string?>
        {
            ["DRIFTLINE_Kafka__Client__no.such.setting"] = "1",
            ["DRIFTLINE_Worker__MetricsPort"] = "0",
        };
        var (code, _, error) = await RunAsync(["run", "--bootstrap", "127.0.0.1:9", "--checkpoint-dir", dir.Path], env);
        Assert.True(code == ExitCode.Kafka, error);
        var line = Assert.Single(error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.StartsWith("driftline: Kafka client setting rejected", line, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Run_WebhookConfiguredAndTheStormBreaksCalibration_AlertReachesTheWebhookAndTheAlertsTopic()
    {
        using var cluster = new MockCluster();
        // The invented demo: a storm partway through breaks calibration and raises an alert.
        using var demo = new MemoryStream();
        new DemoScenario(seed: 7) { Orders = 20_000 }.Write(demo);
        var lines = Encoding.UTF8.GetString(demo.ToArray()).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        // One model key, so every event and its late label share a partition, as in docker/compose.yaml.
        Topics.Produce(cluster.Bootstrap, "wh-events", lines.Select((line, i) => ((string?)"default", line, TestStream.StartMs + i)));
        await using var receiver = new LoopbackReceiver();
        using var dir = new TempDir();
        var env = new Dictionary<string, string?>
        {
            ["DRIFTLINE_Webhook__Url"] = receiver.Url,
            ["DRIFTLINE_Worker__MetricsPort"] = "0",
            ["DRIFTLINE_Kafka__Client__group.protocol"] = "consumer",
            ["DRIFTLINE_Kafka__Client__fetch.wait.max.ms"] = "50",
        };
        string[] args = ["run", "--bootstrap", cluster.Bootstrap, "--group", "wh", "--events-topic", "wh-events", "--predictions-topic", "wh-predictions",
            "--alerts-topic", "wh-alerts", "--dead-letter-topic", "wh-dead", "--checkpoint-dir", dir.Path];

        using var stop = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
        var run = RunAsync(args, env, token: stop.Token);
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(90);
        while (!receiver.Requests.Any(r => r.Body.Contains("\"raised\"", StringComparison.Ordinal)) && !run.IsCompleted)
        {
            Assert.True(DateTime.UtcNow < deadline, "no alert reached the webhook");
            await Task.Delay(50, TestContext.Current.CancellationToken);
        }
        await stop.CancelAsync();
        var (code, _, error) = await run;

        Assert.True(code == ExitCode.Ok, error);
        var posted = receiver.Requests.First(r => r.Body.Contains("\"raised\"", StringComparison.Ordinal));
        Assert.Equal("POST", posted.Method);
        Assert.StartsWith("application/json", posted.ContentType, StringComparison.Ordinal);
        var alert = JsonDocument.Parse(posted.Body).RootElement;
        Assert.Equal("raised", alert.GetProperty("state").GetString());
        Assert.False(string.IsNullOrEmpty(alert.GetProperty("rule").GetString()));
        Assert.False(string.IsNullOrEmpty(alert.GetProperty("metric").GetString()));
        Assert.True(alert.GetProperty("window").GetInt64() > 0);
        Assert.True(double.IsFinite(alert.GetProperty("value").GetDouble()));
        // The same alert, byte for byte, is on the alerts topic.
        var published = Topics.ReadAll(cluster.Bootstrap, "wh-alerts", v => v.Contains(posted.Body), TimeSpan.FromSeconds(30));
        Assert.Contains(posted.Body, published);
    }

    private static async Task<(int Code, string Out, string Error)> RunAsync(string[] args, IDictionary<string, string?>? env = null, string stdin = "", CancellationToken? token = null)
    {
        var output = new StringWriter();
        var error = new StringWriter();
        var context = new CommandContext(output, error, env ?? new Dictionary<string, string?>(), () => new MemoryStream(Encoding.UTF8.GetBytes(stdin)));
        int code = await DriftlineCli.RunAsync(args, context, token ?? TestContext.Current.CancellationToken);
        return (code, output.ToString(), error.ToString());
    }
}
