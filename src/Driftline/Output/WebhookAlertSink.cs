using System.Buffers;
using System.Net.Http.Headers;
using System.Text.Encodings.Web;
using System.Text.Json;
using System.Threading.Channels;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Serilog;

namespace Driftline.Output;

/// <summary>
/// POSTs each alert, as the JSON object of an <c>alerts.jsonl</c> line, to
/// <see cref="WebhookOptions.Url"/> from a sender task of its own. <see cref="Enqueue"/> never
/// waits: alerts go onto a bounded channel (<see cref="WebhookOptions.QueueLimit"/>) whose
/// oldest entry is dropped, and counted, when the receiver falls that far behind, so a slow or
/// absent receiver cannot hold up scoring. Network errors, timeouts, 408, 429 and 5xx are
/// retried with jittered exponential back-off up to <see cref="WebhookOptions.MaxAttempts"/>;
/// any other answer is final. Delivery is at least once: a retry after a lost response repeats
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
        // The per-attempt timeout is a linked token (see SendOnceAsync), so shutdown can cut it short.
        _client = new HttpClient(handler, disposeHandler: true) { Timeout = Timeout.InfiniteTimeSpan };
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
        for (int attempt = 1; ; attempt++)
        {
            var (outcome, reason, retryAfter) = await SendOnceAsync(body, key).ConfigureAwait(false);
            if (outcome == WebhookAttempt.Sent)
            {
                Interlocked.Increment(ref _sent);
                return;
            }
            if (outcome == WebhookAttempt.Final || attempt >= _options.MaxAttempts || _abort.IsCancellationRequested)
            {
                Interlocked.Increment(ref _failed);
                Log.Warning("Webhook to {Host}: gave up alert {Rule} ({State}, label {Labels}) after {Attempts} attempts: {Reason}",
                    _address.Authority, alert.Rule, alert.Raised ? "raised" : "cleared", alert.Labels, attempt, reason);
                return;
            }
            try
            {
                await Task.Delay(Backoff(attempt, retryAfter), _abort.Token).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                Interlocked.Increment(ref _failed);
                Log.Warning("Webhook to {Host}: gave up alert {Rule} ({State}, label {Labels}) at shutdown after {Attempts} attempts: {Reason}",
                    _address.Authority, alert.Rule, alert.Raised ? "raised" : "cleared", alert.Labels, attempt, reason);
                return;
            }
        }
    }

    private async Task<(WebhookAttempt Outcome, string Reason, TimeSpan? RetryAfter)> SendOnceAsync(byte[] body, string key)
    {
        Interlocked.Increment(ref _attempts);
        using var timeout = CancellationTokenSource.CreateLinkedTokenSource(_abort.Token);
        timeout.CancelAfter(_options.Timeout);
        using var request = new HttpRequestMessage(HttpMethod.Post, _address) { Content = new ByteArrayContent(body) };
        request.Content.Headers.ContentType = JsonType;
        request.Headers.Add("Idempotency-Key", key);
        try
        {
            using var response = await _client.SendAsync(request, HttpCompletionOption.ResponseHeadersRead, timeout.Token).ConfigureAwait(false);
            int status = (int)response.StatusCode;
            if (response.IsSuccessStatusCode)
            {
                return (WebhookAttempt.Sent, "", null);
            }
            string reason = $"HTTP {status} {response.ReasonPhrase}";
            if (status is 408 or 429 or >= 500)
            {
                return (WebhookAttempt.Retry, reason, RetryAfter(response.Headers.RetryAfter));
            }
            if (status is >= 300 and < 400)
            {
                reason += $" (redirected to {response.Headers.Location}; set Webhook:Url to the final address)";
            }
            return (WebhookAttempt.Final, reason, null);
        }
        catch (HttpRequestException ex)
        {
            return (WebhookAttempt.Retry, ex.Message, null);
        }
        catch (OperationCanceledException) when (!_abort.IsCancellationRequested)
        {
            return (WebhookAttempt.Retry, $"no answer within Webhook:Timeout ({_options.Timeout})", null);
        }
        catch (OperationCanceledException)
        {
            return (WebhookAttempt.Final, "cancelled at shutdown", null);
        }
    }

    /// <summary>
    /// The wait after failed attempt <paramref name="attempt"/>: FirstRetryDelay·2^(attempt−1),
    /// capped at MaxRetryDelay, of which a random half is waited ("equal jitter", Brooker 2015,
    /// "Exponential Backoff And Jitter", AWS Architecture Blog), so workers that failed together
    /// do not retry together. A receiver's Retry-After, when longer, wins, still capped.
    /// </summary>
    private TimeSpan Backoff(int attempt, TimeSpan? retryAfter)
    {
        double cap = _options.MaxRetryDelay.TotalMilliseconds;
        double full = Math.Min(cap, _options.FirstRetryDelay.TotalMilliseconds * Math.Pow(2, attempt - 1));
        double wait = full / 2 + Random.Shared.NextDouble() * full / 2;
        if (retryAfter is { } asked && asked.TotalMilliseconds > wait)
        {
            wait = Math.Min(cap, asked.TotalMilliseconds);
        }
        return TimeSpan.FromMilliseconds(wait);
    }

    private static TimeSpan? RetryAfter(RetryConditionHeaderValue? header) => header switch
    {
        { Delta: { } delta } => delta,
        { Date: { } date } => date - DateTimeOffset.UtcNow,
        _ => null,
    };

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
