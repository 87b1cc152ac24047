namespace Driftline.Output;

/// <summary>How one POST of an alert ended, as <see cref="WebhookAlertSink"/> decides what to do next.</summary>
internal enum WebhookAttempt
{
    /// <summary>The receiver accepted the alert (2xx).</summary>
    Sent,

    /// <summary>Worth trying again: a network error, a timeout, 408, 429 or 5xx.</summary>
    Retry,

    /// <summary>Another try would get the same answer (other 4xx, a redirect), or shutdown cut the attempt off.</summary>
    Final,
}
