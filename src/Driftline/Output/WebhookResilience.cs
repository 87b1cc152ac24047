using Driftline.Core.Options;
using Microsoft.Extensions.Http.Resilience;
using Polly;
using Polly.CircuitBreaker;

namespace Driftline.Output;

/// <summary>
/// How hard the webhook tries: retry with jittered exponential back-off that honours a
/// receiver's <c>Retry-After</c>, a circuit breaker so a dead receiver is not hammered by a queue
/// of alerts, and a timeout per attempt. Built from Polly v8's HTTP strategies
/// (Microsoft.Extensions.Http.Resilience) rather than by hand.
/// </summary>
internal static class WebhookResilience
{
    /// <summary>Attempts within <see cref="SamplingDuration"/> before the breaker may open: 10.</summary>
    public const int BreakerMinimumAttempts = 10;

    /// <summary>Share of failed attempts that opens the breaker: half.</summary>
    public const double BreakerFailureRatio = 0.5;

    /// <summary>The window the breaker counts attempts over: 30 seconds.</summary>
    public static readonly TimeSpan SamplingDuration = TimeSpan.FromSeconds(30);

    /// <summary>How long an open breaker fails attempts at once, without the network: 15 seconds.</summary>
    public static readonly TimeSpan BreakDuration = TimeSpan.FromSeconds(15);

    /// <summary>
    /// The pipeline for <paramref name="options"/>, outermost first: retry (network errors,
    /// timeouts, 408, 429, 5xx and an open breaker; up to <see cref="WebhookOptions.MaxAttempts"/>
    /// attempts), circuit breaker, per-attempt timeout (<see cref="WebhookOptions.Timeout"/>).
    /// </summary>
    public static ResiliencePipeline<HttpResponseMessage> Build(WebhookOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        var builder = new ResiliencePipelineBuilder<HttpResponseMessage>();
        if (options.MaxAttempts > 1)
        {
            builder.AddRetry(new HttpRetryStrategyOptions
            {
                MaxRetryAttempts = options.MaxAttempts - 1,
                BackoffType = DelayBackoffType.Exponential,
                UseJitter = true,
                Delay = options.FirstRetryDelay,
                MaxDelay = options.MaxRetryDelay,
                // Retry-After is read below so that it is capped by MaxRetryDelay too.
                ShouldRetryAfterHeader = false,
                DelayGenerator = args => ValueTask.FromResult(RetryAfter(args.Outcome.Result, options.MaxRetryDelay)),
                ShouldHandle = args => ValueTask.FromResult(
                    args.Outcome.Exception is BrokenCircuitException || HttpClientResiliencePredicates.IsTransient(args.Outcome)),
            });
        }
        builder.AddCircuitBreaker(new HttpCircuitBreakerStrategyOptions
        {
            FailureRatio = BreakerFailureRatio,
            MinimumThroughput = BreakerMinimumAttempts,
            SamplingDuration = SamplingDuration,
            BreakDuration = BreakDuration,
        });
        builder.AddTimeout(new HttpTimeoutStrategyOptions { Timeout = options.Timeout });
        return builder.Build();
    }

    /// <summary>The receiver's Retry-After, capped at <paramref name="cap"/>; null (the back-off) when it gave none.</summary>
    public static TimeSpan? RetryAfter(HttpResponseMessage? response, TimeSpan cap)
    {
        TimeSpan? asked = response?.Headers.RetryAfter switch
        {
            { Delta: { } delta } => delta,
            { Date: { } date } => date - DateTimeOffset.UtcNow,
            _ => null,
        };
        return asked is { } wait && wait > TimeSpan.Zero ? (wait < cap ? wait : cap) : null;
    }
}
