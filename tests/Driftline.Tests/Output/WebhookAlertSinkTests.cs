using System.Buffers;
using System.Diagnostics;
using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;
using Driftline.Core.Alerts;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Output;
using Driftline.Tests.Cli;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Output;

public sealed class WebhookAlertSinkTests
{
    // Retries a few milliseconds apart, so every case runs in well under a second.
    private static WebhookOptions Options(string url, int attempts = 3, int queue = 100) => new()
    {
        Url = url,
        Timeout = TimeSpan.FromSeconds(5),
        MaxAttempts = attempts,
        FirstRetryDelay = TimeSpan.FromMilliseconds(10),
        MaxRetryDelay = TimeSpan.FromMilliseconds(40),
        QueueLimit = queue,
        ShutdownGrace = TimeSpan.FromSeconds(5),
    };

    private static AlertTransition Alert(int n = 1, bool raised = true) =>
        new($"calibration-gap-{n}", raised, AlertMetric.CalibrationGap, 0.0712, 0.06, 1_000, $"o-{n}",
            new DateTime(2026, 3, 4, 18, 22, 5, DateTimeKind.Utc).Ticks, 4_000 + n, AlertSeverity.Critical,
            Break: "under-predicting: true log-odds ≈ p's + 0.4");

    private static string Json(AlertTransition alert)
    {
        var buffer = new ArrayBufferWriter<byte>();
        using (var w = new Utf8JsonWriter(buffer, new JsonWriterOptions { Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            RecordJson.WriteAlert(w, alert);
        }
        return Encoding.UTF8.GetString(buffer.WrittenSpan);
    }

    [Fact]
    public async Task Enqueue_ReceiverAccepts_PostsTheAlertJson()
    {
        await using var receiver = new LoopbackReceiver(204);
        var alert = Alert();
        await using (var sink = new WebhookAlertSink(Options(receiver.Url)))
        {
            Assert.True(sink.Enqueue(alert));
            await sink.CompleteAsync();
            Assert.Equal((1, 0, 0, 1), (sink.Sent, sink.Failed, sink.Dropped, sink.Attempts));
        }
        var request = Assert.Single(receiver.Requests);
        Assert.Equal("POST", request.Method);
        Assert.Equal("application/json", request.ContentType);
        Assert.Equal(Json(alert), request.Body);
        Assert.False(string.IsNullOrEmpty(request.IdempotencyKey));
    }

    [Fact]
    public async Task Enqueue_Receiver503TwiceThen200_DeliveredOnTheThirdAttempt()
    {
        await using var receiver = new LoopbackReceiver((i, _) => Task.FromResult(i < 2 ? 503 : 200));
        await using var sink = new WebhookAlertSink(Options(receiver.Url, attempts: 5));
        sink.Enqueue(Alert());
        await sink.CompleteAsync();

        Assert.Equal((1, 0, 3), (sink.Sent, sink.Failed, sink.Attempts));
        var requests = receiver.Requests;
        Assert.Equal(3, requests.Count);
        // The same alert each time, under the same key, so the receiver can drop repeats.
        Assert.Single(requests.Select(r => r.Body).Distinct());
        Assert.Single(requests.Select(r => r.IdempotencyKey).Distinct());
    }

    [Theory]
    [InlineData(408)]
    [InlineData(429)]
    [InlineData(500)]
    [InlineData(503)]
    public async Task Enqueue_TransientStatusEveryTime_FailsAfterMaxAttempts(int status)
    {
        await using var receiver = new LoopbackReceiver(status);
        await using var sink = new WebhookAlertSink(Options(receiver.Url, attempts: 3));
        sink.Enqueue(Alert());
        await sink.CompleteAsync();

        Assert.Equal((0, 1, 3), (sink.Sent, sink.Failed, sink.Attempts));
        Assert.Equal(3, receiver.Requests.Count);
    }

    [Theory]
    [InlineData(400)]
    [InlineData(401)]
    [InlineData(404)]
    [InlineData(422)]
    [InlineData(301)]
    public async Task Enqueue_ClientErrorOrRedirect_NotRetried(int status)
    {
        await using var receiver = new LoopbackReceiver(status);
        await using var sink = new WebhookAlertSink(Options(receiver.Url, attempts: 5));
        sink.Enqueue(Alert());
        await sink.CompleteAsync();

        Assert.Equal((0, 1, 1), (sink.Sent, sink.Failed, sink.Attempts));
        Assert.Single(receiver.Requests);
    }

    [Fact]
    public async Task Enqueue_UnreachableReceiver_ReturnsAtOnceAndFailsAfterMaxAttempts()
    {
        var options = Options(LoopbackReceiver.ClosedUrl(), attempts: 3);
        // Back-off of at least 50 + 100 ms per alert: far longer than queuing may take.
        options.FirstRetryDelay = TimeSpan.FromMilliseconds(100);
        options.MaxRetryDelay = TimeSpan.FromMilliseconds(200);
        await using var sink = new WebhookAlertSink(options);

        var clock = Stopwatch.StartNew();
        for (int i = 0; i < 3; i++)
        {
            Assert.True(sink.Enqueue(Alert(i)));
        }
        clock.Stop();
        Assert.True(clock.ElapsedMilliseconds < 100, $"queuing 3 alerts took {clock.ElapsedMilliseconds} ms");
        Assert.Equal(0, sink.Failed);

        await sink.CompleteAsync();
        Assert.Equal((0, 3, 0, 9), (sink.Sent, sink.Failed, sink.Dropped, sink.Attempts));
    }

    [Fact]
    public async Task Enqueue_QueueFull_DropsTheOldestAndCountsIt()
    {
        // The first request is held until released, so the sender is stuck while more arrive.
        var release = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        await using var receiver = new LoopbackReceiver(async (i, stop) =>
        {
            if (i == 0)
            {
                await release.Task.WaitAsync(stop);
            }
            return 200;
        });
        await using var sink = new WebhookAlertSink(Options(receiver.Url, queue: 2));
        sink.Enqueue(Alert(0));
        await receiver.WaitForAsync(1);
        for (int i = 1; i <= 4; i++)
        {
            Assert.True(sink.Enqueue(Alert(i)));
        }
        // Queue of two: alerts 1 and 2 made way for 3 and 4.
        Assert.Equal(2, sink.Dropped);
        release.SetResult();
        await sink.CompleteAsync();

        Assert.Equal((3, 0, 2), (sink.Sent, sink.Failed, sink.Dropped));
        Assert.Equal(new[] { "o-0", "o-3", "o-4" }, receiver.Requests.Select(r => JsonDocument.Parse(r.Body).RootElement.GetProperty("event_id").GetString()));
    }

    [Fact]
    public async Task Enqueue_ReceiverNeverAnswers_TimesOutAndRetries()
    {
        await using var receiver = new LoopbackReceiver(async (_, stop) =>
        {
            await Task.Delay(Timeout.Infinite, stop);
            return 200;
        });
        var options = Options(receiver.Url, attempts: 2);
        options.Timeout = TimeSpan.FromMilliseconds(200);
        await using var sink = new WebhookAlertSink(options);
        sink.Enqueue(Alert());
        await sink.CompleteAsync();

        Assert.Equal((0, 1, 2), (sink.Sent, sink.Failed, sink.Attempts));
        Assert.Equal(2, receiver.Requests.Count);
    }

    [Fact]
    public async Task Enqueue_Receiver429WithRetryAfter_WaitsAsAsked()
    {
        // Retry-After: 1 second, far above the 10-40 ms back-off: the receiver's wait wins
        // (RFC 9110 §10.2.3).
        var handler = new ScriptedHandler(i => i == 0 ? Answer(429, retryAfterSeconds: 1) : Answer(200));
        var options = Options("http://alerts.invalid/hook", attempts: 3);
        options.MaxRetryDelay = TimeSpan.FromSeconds(5);
        await using var sink = new WebhookAlertSink(options, handler);

        var clock = Stopwatch.StartNew();
        sink.Enqueue(Alert());
        await sink.CompleteAsync();

        Assert.Equal((1, 0, 2), (sink.Sent, sink.Failed, sink.Attempts));
        Assert.True(clock.Elapsed >= TimeSpan.FromMilliseconds(900), $"retried after {clock.Elapsed}, before the 1 s asked");
    }

    [Fact]
    public async Task Enqueue_RetryAfterBeyondMaxRetryDelay_CappedThere()
    {
        var handler = new ScriptedHandler(i => i == 0 ? Answer(503, retryAfterSeconds: 3_600) : Answer(200));
        await using var sink = new WebhookAlertSink(Options("http://alerts.invalid/hook"), handler);

        var clock = Stopwatch.StartNew();
        sink.Enqueue(Alert());
        await sink.CompleteAsync();

        Assert.Equal((1, 2), (sink.Sent, sink.Attempts));
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(4), $"an hour's Retry-After was not capped at MaxRetryDelay: {clock.Elapsed}");
    }

    [Fact]
    public async Task Enqueue_ReceiverKeepsFailing_BreakerStopsCallingIt()
    {
        // 10 alerts with 3 attempts each could make 30 calls; the breaker opens after 10 failed
        // attempts (half of at least 10 in 30 s) and the rest fail without the network.
        var handler = new ScriptedHandler(_ => Answer(503));
        await using var sink = new WebhookAlertSink(Options("http://alerts.invalid/hook", attempts: 3), handler);
        for (int i = 0; i < 10; i++)
        {
            sink.Enqueue(Alert(i));
        }
        await sink.CompleteAsync();

        Assert.Equal((0, 10), (sink.Sent, sink.Failed));
        Assert.Equal(WebhookResilience.BreakerMinimumAttempts, sink.Attempts);
        Assert.Equal(WebhookResilience.BreakerMinimumAttempts, handler.Calls);
    }

    private static HttpResponseMessage Answer(int status, int? retryAfterSeconds = null)
    {
        var response = new HttpResponseMessage((System.Net.HttpStatusCode)status);
        if (retryAfterSeconds is { } seconds)
        {
            response.Headers.RetryAfter = new System.Net.Http.Headers.RetryConditionHeaderValue(TimeSpan.FromSeconds(seconds));
        }
        return response;
    }

    /// <summary>Answers the i-th request (0 first) as the script says, without a network.</summary>
    private sealed class ScriptedHandler(Func<int, HttpResponseMessage> script) : HttpMessageHandler
    {
        private int _calls;

        public int Calls => Volatile.Read(ref _calls);

        protected override Task<HttpResponseMessage> SendAsync(HttpRequestMessage request, CancellationToken cancellationToken) =>
            Task.FromResult(script(Interlocked.Increment(ref _calls) - 1));
    }

    [Fact]
    public async Task CompleteAsync_ReceiverHangs_GivesUpAfterTheGrace()
    {
        await using var receiver = new LoopbackReceiver(async (_, stop) =>
        {
            await Task.Delay(Timeout.Infinite, stop);
            return 200;
        });
        var options = Options(receiver.Url);
        options.Timeout = TimeSpan.FromSeconds(30);
        options.ShutdownGrace = TimeSpan.FromMilliseconds(200);
        await using var sink = new WebhookAlertSink(options);
        for (int i = 0; i < 3; i++)
        {
            sink.Enqueue(Alert(i));
        }
        await receiver.WaitForAsync(1);

        var clock = Stopwatch.StartNew();
        await sink.CompleteAsync();
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(5), $"draining took {clock.Elapsed}");
        // The one in flight and the two still queued.
        Assert.Equal((0, 3), (sink.Sent, sink.Failed));
    }

    [Fact]
    public async Task Enqueue_AfterComplete_RefusedAndCountedAsDropped()
    {
        await using var receiver = new LoopbackReceiver();
        await using var sink = new WebhookAlertSink(Options(receiver.Url));
        await sink.CompleteAsync();

        Assert.False(sink.Enqueue(Alert()));
        Assert.Equal((0, 1), (sink.Sent, sink.Dropped));
        await sink.CompleteAsync();
    }

    [Fact]
    public async Task Replay_WebhookConfigured_DeliversEveryAlertLine()
    {
        using var dir = new TempFolder();
        await using var receiver = new LoopbackReceiver();
        var demo = await CliRun.RunAsync("demo", "--out", dir.File("demo.jsonl"), "--orders", "20000");
        Assert.Equal(0, demo.ExitCode);
        File.WriteAllText(dir.File("hook.json"), $$$"""{"Webhook":{"Url":"{{{receiver.Url}}}?token=secret","FirstRetryDelay":"00:00:00.01"}}""");

        var run = await CliRun.RunAsync("replay", dir.File("demo.jsonl"), "--out", dir.File("out"), "--config", dir.File("hook.json"));
        Assert.True(run.ExitCode == 0, run.Error);

        var lines = File.ReadAllLines(dir.File("out/alerts.jsonl"));
        Assert.NotEmpty(lines);
        // Drained before the command returned: one POST per line, in order, byte for byte.
        Assert.Equal(lines, receiver.Requests.Select(r => r.Body));
        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json"))).RootElement;
        Assert.Equal(lines.Length, summary.GetProperty("webhook_sent").GetInt64());
        Assert.Equal(0, summary.GetProperty("webhook_failed").GetInt64());
        Assert.Equal(0, summary.GetProperty("webhook_dropped").GetInt64());
        Assert.Contains($"Webhook: {lines.Length} alerts delivered, 0 failed, 0 dropped.", run.Out, StringComparison.Ordinal);
        // The address may carry a secret: it stays out of the saved model and the report.
        Assert.DoesNotContain("token=secret", File.ReadAllText(dir.File("out/model.json")), StringComparison.Ordinal);
        Assert.DoesNotContain("token=secret", File.ReadAllText(dir.File("out/report.html")), StringComparison.Ordinal);
    }

    [Fact]
    public async Task Replay_NoWebhook_SummaryHasNoWebhookCounts()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), "{\"id\":\"a\",\"features\":{\"x\":1},\"label\":1}\n");
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);
        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json"))).RootElement;
        Assert.False(summary.TryGetProperty("webhook_sent", out _));
    }

    [Fact]
    public void Constructor_NoUrl_Throws() =>
        Assert.Throws<ArgumentException>(() => new WebhookAlertSink(new WebhookOptions()));
}
