using System.Net;
using System.Text;
using Driftline.Configuration;
using Driftline.Kafka.Worker;
using Prometheus;
using Serilog;

namespace Driftline.Cli;

/// <summary>
/// The worker's HTTP endpoint: <c>/metrics</c> in the Prometheus text format (prometheus-net's
/// HttpListener server over <see cref="WorkerMeter"/>, carried by <see cref="MeterScrape"/>) and <c>/health</c> (200 while the Kafka loop runs with a broker reachable and the group joined, 503 otherwise), both on one
/// address, 127.0.0.1 by default.
/// </summary>
/// <remarks>
/// <c>*</c>, <c>0.0.0.0</c> and <c>::</c> mean every interface (as in a container). HttpListener
/// spells that <c>+</c> in a prefix; a numeric any-address is refused by it, and a prefix names
/// the host the request must ask for, so every other address is used as it is written.
/// OpenTelemetry's listener exporter, used before, could not bind every interface at all: it
/// builds its prefix through <see cref="UriBuilder"/>, which rejects the wildcard.
/// </remarks>
internal sealed class MetricsEndpoint : IDisposable
{
    private readonly WorkerMeter _meter;
    private readonly MeterScrape _scrape;
    private readonly MetricServer _server;
    private readonly HttpListener _health;
    private readonly CancellationTokenSource _stop = new();

    private MetricsEndpoint(WorkerOptions options, KafkaWorker worker)
    {
        string host = ListenerHost(options.MetricsAddress);
        var registry = Metrics.NewCustomRegistry();
        _meter = new WorkerMeter(worker.Stats);
        _scrape = new MeterScrape(_meter.Meter, registry);
        _server = new MetricServer(host, options.MetricsPort, "metrics/", registry);
        _health = new HttpListener();
        _health.Prefixes.Add($"http://{host}:{options.MetricsPort}/health/");
        try
        {
            _server.Start();
            _health.Start();
        }
        catch
        {
            Dispose();
            throw;
        }
        _ = ServeHealthAsync(worker.Stats);
    }

    /// <summary>
    /// Starts the endpoint. When it cannot (the port is taken, the address is not this machine's),
    /// logs why and throws <see cref="MetricsEndpointException"/>: an endpoint the operator asked for
    /// and cannot scrape is a configuration error, not something to run without.
    /// </summary>
    public static MetricsEndpoint Start(WorkerOptions options, KafkaWorker worker)
    {
        ArgumentNullException.ThrowIfNull(options);
        try
        {
            var endpoint = new MetricsEndpoint(options, worker);
            Log.Information("Metrics on http://{Address}:{Port}/metrics, health on /health", options.MetricsAddress, options.MetricsPort);
            return endpoint;
        }
        catch (Exception ex) when (ex is HttpListenerException or InvalidOperationException or System.Net.Sockets.SocketException)
        {
            throw new MetricsEndpointException(
                $"Worker:MetricsAddress/Worker:MetricsPort: cannot serve http://{options.MetricsAddress}:{options.MetricsPort}/metrics ({ex.Message}); choose a free port or an address of this machine (127.0.0.1, or * for every interface)", ex);
        }
    }

    /// <summary>The host part of an HttpListener prefix for <paramref name="address"/>.</summary>
    internal static string ListenerHost(string address) => address switch
    {
        "*" or "+" or "0.0.0.0" or "::" or "[::]" => "+",
        _ when IPAddress.TryParse(address, out var ip) && ip.AddressFamily == System.Net.Sockets.AddressFamily.InterNetworkV6 => $"[{ip}]",
        _ => address,
    };

    private async Task ServeHealthAsync(WorkerStats stats)
    {
        while (!_stop.IsCancellationRequested)
        {
            HttpListenerContext request;
            try
            {
                request = await _health.GetContextAsync().ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is HttpListenerException or ObjectDisposedException or InvalidOperationException)
            {
                return; // stopped
            }
            // 200 only once work can flow: a loop that runs with no broker is not ready (orchestrators route and restart by this).
            bool healthy = stats.Healthy;
            string status = !stats.Running ? "stopped" : !stats.BrokerReachable ? (stats.GroupJoined ? "broker-down" : "connecting") : !stats.GroupJoined ? "joining" : "running";
            double age = stats.LastCheckpointAt == DateTime.MinValue ? -1 : (DateTime.UtcNow - stats.LastCheckpointAt).TotalSeconds;
            var body = Encoding.UTF8.GetBytes(string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"{{\"status\":\"{status}\",\"partitions\":{stats.Partitions},\"checkpoint_age_seconds\":{age:0.0}}}\n"));
            request.Response.StatusCode = healthy ? 200 : 503;
            request.Response.ContentType = "application/json";
            try
            {
                await request.Response.OutputStream.WriteAsync(body).ConfigureAwait(false);
                request.Response.Close();
            }
            catch (HttpListenerException)
            {
                // The client went away.
            }
        }
    }

    /// <inheritdoc />
    public void Dispose()
    {
        _stop.Cancel();
        _health.Close();
        _server.Dispose();
        _scrape.Dispose();
        _meter.Dispose();
        _stop.Dispose();
    }
}
