namespace Driftline.Core.Options;

/// <summary>
/// Where alerts are POSTed besides <c>alerts.jsonl</c>, and how hard delivery is tried. Bound
/// from the <c>Webhook</c> section; plain data, the sender lives in the host.
/// </summary>
internal sealed class WebhookOptions
{
    /// <summary>Absolute http or https address each alert is POSTed to. Default null: no webhook; a blank value also means none.</summary>
    public string? Url { get; set; }

    /// <summary>Longest wait for one attempt (connect, send and response). Default 5 seconds.</summary>
    public TimeSpan Timeout { get; set; } = TimeSpan.FromSeconds(5);

    /// <summary>Attempts per alert, the first included; 1 means no retry. Default 5.</summary>
    public int MaxAttempts { get; set; } = 5;

    /// <summary>
    /// Back-off before the second attempt; each later one doubles, up to <see cref="MaxRetryDelay"/>.
    /// The wait actually taken is a random point between half the back-off and all of it, so
    /// workers that failed together do not retry together. Default 1 second.
    /// </summary>
    public TimeSpan FirstRetryDelay { get; set; } = TimeSpan.FromSeconds(1);

    /// <summary>Longest wait between attempts, also the cap on a receiver's <c>Retry-After</c>. Default 60 seconds.</summary>
    public TimeSpan MaxRetryDelay { get; set; } = TimeSpan.FromSeconds(60);

    /// <summary>
    /// Alerts waiting to be sent; when the receiver falls this far behind, the oldest waiting
    /// alert is dropped (and counted) so scoring never waits for the network. Default 1,000.
    /// </summary>
    public int QueueLimit { get; set; } = 1_000;

    /// <summary>
    /// At shutdown, how long alerts still queued may take to go out before the rest are given up
    /// (and counted as failed). Default 10 seconds.
    /// </summary>
    public TimeSpan ShutdownGrace { get; set; } = TimeSpan.FromSeconds(10);

    /// <summary>
    /// The address alerts go to, or null when <see cref="Url"/> is not set (blank counts as not
    /// set) or is not an absolute address. A method, not a property, so the configuration binder
    /// does not mistake it for a setting.
    /// </summary>
    public Uri? Address() => IsSet && Uri.TryCreate(Url!.Trim(), UriKind.Absolute, out var uri) ? uri : null;

    /// <summary>Checks every option; returns the mistakes found. The timing options are checked even when the webhook is off.</summary>
    public IEnumerable<OptionError> Validate(string section = "Webhook")
    {
        if (IsSet)
        {
            if (!Uri.TryCreate(Url!.Trim(), UriKind.Absolute, out var uri))
            {
                yield return new($"{section}:Url", $"'{Url}' is not an absolute address", "Give the full address, e.g. \"https://alerts.example.com/driftline\", or leave it out to send no webhook");
            }
            else if (uri.Scheme != Uri.UriSchemeHttp && uri.Scheme != Uri.UriSchemeHttps)
            {
                yield return new($"{section}:Url", $"'{uri.Scheme}' is not http or https", "Use an http:// or https:// address");
            }
        }
        if (Timeout <= TimeSpan.Zero || Timeout > TimeSpan.FromMinutes(10))
        {
            yield return new($"{section}:Timeout", $"{Timeout} is outside (0, 10 minutes]", "Use a few seconds, e.g. \"00:00:05\"");
        }
        if (MaxAttempts is < 1 or > 100)
        {
            yield return new($"{section}:MaxAttempts", $"{MaxAttempts} is outside 1–100", "Use 5 (1 sends once and never retries)");
        }
        if (FirstRetryDelay <= TimeSpan.Zero)
        {
            yield return new($"{section}:FirstRetryDelay", $"{FirstRetryDelay} is not a positive duration", "Use e.g. \"00:00:01\"");
        }
        if (MaxRetryDelay < FirstRetryDelay || MaxRetryDelay > TimeSpan.FromHours(1))
        {
            yield return new($"{section}:MaxRetryDelay", $"{MaxRetryDelay} is below FirstRetryDelay ({FirstRetryDelay}) or above one hour", "Use e.g. \"00:01:00\"");
        }
        if (QueueLimit is < 1 or > 1_000_000)
        {
            yield return new($"{section}:QueueLimit", $"{QueueLimit} is outside 1–1,000,000", "Use 1000");
        }
        if (ShutdownGrace < TimeSpan.Zero || ShutdownGrace > TimeSpan.FromMinutes(10))
        {
            yield return new($"{section}:ShutdownGrace", $"{ShutdownGrace} is outside [0, 10 minutes]", "Use e.g. \"00:00:10\"");
        }
    }

    private bool IsSet => !string.IsNullOrWhiteSpace(Url);
}
