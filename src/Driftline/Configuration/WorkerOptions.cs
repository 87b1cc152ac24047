using Driftline.Core.Options;

namespace Driftline.Configuration;

/// <summary>How the live worker's process presents itself, bound from the <c>Worker</c> section.</summary>
internal sealed class WorkerOptions
{
    /// <summary>Log format on standard error: <c>text</c> or <c>json</c> (compact JSON, one event a line). Default text.</summary>
    public string LogFormat { get; set; } = "text";

    /// <summary>Address the metrics and health endpoint listens on: an IP address, or <c>*</c> for every interface (inside a container). Default 127.0.0.1 (this machine only).</summary>
    public string MetricsAddress { get; set; } = "127.0.0.1";

    /// <summary>Port of the metrics (<c>/metrics</c>) and health (<c>/health</c>) endpoint; 0 turns it off. Default 9464.</summary>
    public int MetricsPort { get; set; } = 9464;

    /// <summary>
    /// With Kafka: stop with exit code 7 once no broker has been reachable for this long (from the
    /// start, or since the last contact), for orchestrators that restart a failed container.
    /// Default 00:00:00: off, the worker keeps retrying as librdkafka does.
    /// </summary>
    public TimeSpan ExitAfterBrokerDown { get; set; } = TimeSpan.Zero;

    /// <summary>Checks every option; returns the mistakes found.</summary>
    public IEnumerable<OptionError> Validate()
    {
        if (ExitAfterBrokerDown < TimeSpan.Zero)
        {
            yield return new("Worker:ExitAfterBrokerDown", $"{ExitAfterBrokerDown:c} is negative", "Use a duration such as \"00:02:00\", or 00:00:00 to keep retrying");
        }
        if (LogFormat is not ("text" or "json"))
        {
            yield return new("Worker:LogFormat", $"'{LogFormat}' is not a log format", "Use text or json");
        }
        if (MetricsPort is < 0 or > 65535)
        {
            yield return new("Worker:MetricsPort", $"{MetricsPort} is not a port", "Use 1–65535, or 0 to turn the endpoint off");
        }
        if (!System.Net.IPAddress.TryParse(MetricsAddress, out _) && MetricsAddress is not ("localhost" or "*"))
        {
            yield return new("Worker:MetricsAddress", $"'{MetricsAddress}' is not an IP address", "Use 127.0.0.1 (this machine only) or * (every interface, inside a container)");
        }
    }
}
