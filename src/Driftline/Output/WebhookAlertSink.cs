using System.Buffers;
using System.Net.Http.Headers;
using System.Text.Encodings.Web;
using System.Text.Json;
using System.Threading.Channels;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Microsoft.Extensions.Http.Resilience;
using Polly.CircuitBreaker;
using Polly.Timeout;
using Serilog;

namespace Driftline.Output;

/// <summary>
/// POSTs each alert, as the JSON object of an <c>alerts.jsonl</c> line, to
/// <see cref="WebhookOptions.Url"/> from a sender task of its own. <see cref="Enqueue"/> never
/// waits: alerts go onto a bounded channel (<see cref="WebhookOptions.QueueLimit"/>) whose
/// oldest entry is dropped, and counted, when the receiver falls that far behind, so a slow or
/// absent receiver cannot hold up scoring. Network errors, timeouts, 408, 429 and 5xx are
/// retried with jittered exponential back-off up to <see cref="WebhookOptions.MaxAttempts"/>,
/// honouring Retry-After, behind a circuit breaker (<see cref="WebhookResilience"/>); any other
/// answer is final. Delivery is at least once: a retry after a lost response repeats
/// an alert, with the same <c>Idempotency-Key</c> header so a receiver can discard the repeat.
/// Failures are logged and counted, never thrown: <c>alerts.jsonl</c> stays the record.
/// </summary>
internal sealed class WebhookAlertSink : IAsyncDisposable
{
    private static readonly JsonWriterOptions JsonOptions = new() { Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };
    private static readonly MediaTypeHeaderValue JsonType = new("application/json");

    private readonly WebhookOptions _options;
    private readonly Uri _address;
    private readonly HttpClient _client;
    private readonly Channel<AlertTransition> _queue;
    private readonly CancellationTokenSource _abort = new();
    private readonly Lock _gate = new();
    private readonly Task _sender;
    private Task? _completion;
    private bool _disposed;
    private long _sent;
    private long _failed;
    private long _dropped;
    private long _attempts;

    /// <summary>Starts the sender for <paramref name="options"/>.</summary>
    /// <param name="options">Validated webhook options with a <see cref="WebhookOptions.Url"/>.</param>
    /// <param name="handler">Transport for tests; null uses a pooled socket handler that does not follow redirects.</param>
    /// <exception cref="ArgumentException"><paramref name="options"/> has no usable address.</exception>
    public WebhookAlertSink(WebhookOptions options, HttpMessageHandler? handler = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        _address = options.Address() ?? throw new ArgumentException("Webhook:Url is not set to an absolute address", nameof(options));
        _options = options;
        // A redirect of a POST turns into a GET on most paths, which would lose the alert
        // quietly; a redirect is reported instead, so the operator fixes the address.
        handler ??= new SocketsHttpHandler
        {
            AllowAutoRedirect = false,
            ConnectTimeout = options.Timeout,
            PooledConnectionLifetime = TimeSpan.FromMinutes(5),
        };
        // The per-attempt timeout is the pipeline's; shutdown cuts any attempt short through _abort.
        var counted = new AttemptCountingHandler(handler, () => Interlocked.Increment(ref _attempts));
        var resilient = new ResilienceHandler(WebhookResilience.Build(options)) { InnerHandler = counted };
        _client = new HttpClient(resilient, disposeHandler: true) { Timeout = Timeout.InfiniteTimeSpan };
        _client.DefaultRequestHeaders.UserAgent.Add(new ProductInfoHeaderValue("driftline", typeof(WebhookAlertSink).Assembly.GetName().Version?.ToString(3) ?? "0"));
        // Several writers are allowed so a host with more than one producer can share a sink.
        _queue = Channel.CreateBounded<AlertTransition>(
            new BoundedChannelOptions(options.QueueLimit) { SingleReader = true, SingleWriter = false, FullMode = BoundedChannelFullMode.DropOldest },
            OnDropped);
        _sender = Task.Run(SendAllAsync);
    }

    /// <summary>Alerts the receiver accepted (a 2xx answer).</summary>
    public long Sent => Interlocked.Read(ref _sent);

    /// <summary>Alerts given up: a final non-retryable answer, attempts used up, or still queued when the shutdown grace ran out.</summary>
    public long Failed => Interlocked.Read(ref _failed);

    /// <summary>Alerts dropped unsent because the queue was full (the oldest go first), or offered after <see cref="CompleteAsync"/>.</summary>
    public long Dropped => Interlocked.Read(ref _dropped);

    /// <summary>HTTP attempts made, retries included.</summary>
    public long Attempts => Interlocked.Read(ref _attempts);

    /// <summary>
    /// Queues <paramref name="alert"/> and returns at once, whatever the receiver is doing. A full
    /// queue drops its oldest alert to make room. Returns false, and counts the alert as dropped,
    /// once <see cref="CompleteAsync"/> has been called.
    /// </summary>
    public bool Enqueue(AlertTransition alert)
    {
        ArgumentNullException.ThrowIfNull(alert);
        if (_queue.Writer.TryWrite(alert))
        {
            return true;
        }
        Interlocked.Increment(ref _dropped);
        return false;
    }

    /// <summary>
    /// Stops taking alerts and waits for the queued ones to go out, for at most
    /// <see cref="WebhookOptions.ShutdownGrace"/>; then the attempt in flight is cancelled and the
    /// rest are counted as failed. Safe to call more than once. Rethrows only a fault of the
    /// sender itself (a bug), never a delivery failure.
    /// </summary>
    public Task CompleteAsync()
    {
        lock (_gate)
        {
            return _completion ??= DrainAsync();
        }
    }

    /// <summary>Drains as <see cref="CompleteAsync"/> does, then releases the HTTP client.</summary>
    public async ValueTask DisposeAsync()
    {
        try
        {
            await CompleteAsync().ConfigureAwait(false);
        }
        finally
        {
            lock (_gate)
            {
                if (!_disposed)
                {
                    _disposed = true;
                    _client.Dispose();
                    _abort.Dispose();
                }
            }
        }
    }

    private async Task DrainAsync()
    {
        _queue.Writer.TryComplete();
        try
        {
            await _sender.WaitAsync(_options.ShutdownGrace).ConfigureAwait(false);
        }
        catch (TimeoutException)
        {
            Log.Warning("Webhook to {Host}: shutdown grace of {Grace} ran out; giving up the alerts not yet delivered", _address.Authority, _options.ShutdownGrace);
            await _abort.CancelAsync().ConfigureAwait(false);
            await _sender.ConfigureAwait(false);
        }
        if (Dropped > 0)
        {
            Log.Warning("Webhook to {Host}: {Dropped} alerts were dropped because {QueueLimit} were already waiting; raise Webhook:QueueLimit or speed up the receiver", _address.Authority, Dropped, _options.QueueLimit);
        }
    }

    private void OnDropped(AlertTransition alert)
    {
        long dropped = Interlocked.Increment(ref _dropped);
        // Logged at 1, 2, 4, 8, ... drops: enough to notice, not a flood while the receiver is down.
        if ((dropped & (dropped - 1)) == 0)
        {
            Log.Warning("Webhook to {Host}: queue full, dropped the oldest waiting alert ({Rule}, {State}); {Dropped} dropped so far",
                _address.Authority, alert.Rule, alert.Raised ? "raised" : "cleared", dropped);
        }
    }

    private async Task SendAllAsync()
    {
        var reader = _queue.Reader;
        var buffer = new ArrayBufferWriter<byte>(4096);
        try
        {
            while (await reader.WaitToReadAsync(_abort.Token).ConfigureAwait(false))
            {
                while (!_abort.IsCancellationRequested && reader.TryRead(out var alert))
                {
                    await DeliverAsync(alert, Serialize(alert, buffer)).ConfigureAwait(false);
                }
            }
        }
        catch (OperationCanceledException) when (_abort.IsCancellationRequested)
        {
            // Shutdown grace ran out; what is left is counted below.
        }
        long abandoned = 0;
        while (reader.TryRead(out _))
        {
            abandoned++;
        }
        if (abandoned > 0)
        {
            Interlocked.Add(ref _failed, abandoned);
            Log.Warning("Webhook to {Host}: {Abandoned} queued alerts were not sent before shutdown", _address.Authority, abandoned);
        }
    }

    private async Task DeliverAsync(AlertTransition alert, byte[] body)
    {
        string key = Guid.NewGuid().ToString("N");
        string reason;
        using var request = new HttpRequestMessage(HttpMethod.Post, _address) { Content = new ByteArrayContent(body) };
        request.Content.Headers.ContentType = JsonType;
        request.Headers.Add("Idempotency-Key", key);
        try
        {
            // Retries, back-off, Retry-After, the breaker and the per-attempt timeout all happen
            // inside the client's resilience handler (WebhookResilience); this sees the last answer.
            using var response = await _client.SendAsync(request, HttpCompletionOption.ResponseHeadersRead, _abort.Token).ConfigureAwait(false);
            if (response.IsSuccessStatusCode)
            {
                Interlocked.Increment(ref _sent);
                return;
            }
            int status = (int)response.StatusCode;
            reason = $"HTTP {status} {response.ReasonPhrase}";
            if (status is >= 300 and < 400)
            {
                reason += $" (redirected to {response.Headers.Location}; set Webhook:Url to the final address)";
            }
        }
        catch (OperationCanceledException) when (_abort.IsCancellationRequested)
        {
            reason = "cancelled at shutdown";
        }
        catch (TimeoutRejectedException)
        {
            reason = $"no answer within Webhook:Timeout ({_options.Timeout})";
        }
        catch (BrokenCircuitException)
        {
            reason = $"the receiver failed too often; not tried for {WebhookResilience.BreakDuration.TotalSeconds:0} s (circuit open)";
        }
        catch (HttpRequestException ex)
        {
            reason = ex.Message;
        }
        Interlocked.Increment(ref _failed);
        Log.Warning("Webhook to {Host}: gave up alert {Rule} ({State}, label {Labels}): {Reason}",
            _address.Authority, alert.Rule, alert.Raised ? "raised" : "cleared", alert.Labels, reason);
    }

    private static byte[] Serialize(AlertTransition alert, ArrayBufferWriter<byte> buffer)
    {
        buffer.ResetWrittenCount();
        using (var w = new Utf8JsonWriter(buffer, JsonOptions))
        {
            RecordJson.WriteAlert(w, alert);
        }
        return buffer.WrittenSpan.ToArray();
    }
}
