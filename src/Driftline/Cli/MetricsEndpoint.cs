using System.Net;
using System.Text;
using Driftline.Configuration;
using Driftline.Kafka.Worker;
using OpenTelemetry;
using OpenTelemetry.Metrics;
using Serilog;

namespace Driftline.Cli;

/// <summary>
/// The worker's HTTP endpoint: <c>/metrics</c> in the Prometheus text format (OpenTelemetry's
/// Prometheus HttpListener exporter over <see cref="WorkerMeter"/>) and <c>/health</c> (200
/// while the Kafka loop runs, 503 otherwise), both on one address, 127.0.0.1 by default.
/// </summary>
internal sealed class MetricsEndpoint : IDisposable
{
    private readonly WorkerMeter _meter;
    private readonly MeterProvider _provider;
    private readonly HttpListener _health;
    private readonly CancellationTokenSource _stop = new();

    private MetricsEndpoint(WorkerOptions options, KafkaWorker worker)
    {
        _meter = new WorkerMeter(worker.Stats);
        _provider = Sdk.CreateMeterProviderBuilder()
            .AddMeter(WorkerMeter.MeterName)
            .AddPrometheusHttpListener(o =>
            {
                o.Host = options.MetricsAddress;
                o.Port = options.MetricsPort;
            })
            .Build();
        _health = new HttpListener();
        _health.Prefixes.Add($"http://{options.MetricsAddress}:{options.MetricsPort}/health/");
        _health.Start();
        _ = ServeHealthAsync(worker.Stats);
    }

    /// <summary>Starts the endpoint, or logs why it could not and returns null (the worker runs without it).</summary>
    public static MetricsEndpoint? Start(WorkerOptions options, KafkaWorker worker)
    {
        try
        {
            var endpoint = new MetricsEndpoint(options, worker);
            Log.Information("Metrics on http://{Address}:{Port}/metrics, health on /health", options.MetricsAddress, options.MetricsPort);
            return endpoint;
        }
        catch (Exception ex) when (ex is HttpListenerException or InvalidOperationException or System.Net.Sockets.SocketException)
        {
            Log.Warning("Metrics endpoint on {Address}:{Port} not started: {Reason}", options.MetricsAddress, options.MetricsPort, ex.Message);
            return null;
        }
    }

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
            bool healthy = stats.Running;
            double age = stats.LastCheckpointAt == DateTime.MinValue ? -1 : (DateTime.UtcNow - stats.LastCheckpointAt).TotalSeconds;
            var body = Encoding.UTF8.GetBytes(string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"{{\"status\":\"{(healthy ? "running" : "stopped")}\",\"partitions\":{stats.Partitions},\"checkpoint_age_seconds\":{age:0.0}}}\n"));
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
        _provider.Dispose();
        _meter.Dispose();
        _stop.Dispose();
    }
}
