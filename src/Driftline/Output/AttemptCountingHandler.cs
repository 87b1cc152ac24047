namespace Driftline.Output;

/// <summary>
/// Counts the requests that reach the network, below the resilience pipeline, so retries are
/// counted and attempts refused by an open circuit breaker are not.
/// </summary>
internal sealed class AttemptCountingHandler(HttpMessageHandler inner, Action onAttempt) : DelegatingHandler(inner)
{
    /// <inheritdoc />
    protected override Task<HttpResponseMessage> SendAsync(HttpRequestMessage request, CancellationToken cancellationToken)
    {
        onAttempt();
        return base.SendAsync(request, cancellationToken);
    }
}
