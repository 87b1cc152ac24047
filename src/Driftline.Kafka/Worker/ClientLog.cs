using Confluent.Kafka;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>librdkafka's own log lines, forwarded to Serilog (called on librdkafka's threads: no client calls here).</summary>
internal static class ClientLog
{
    /// <summary>Writes a librdkafka log line to the worker's log at the matching level.</summary>
    public static void Write(string client, LogMessage message)
    {
        // A failed connection (facility FAIL) also reaches the error callback, which sums such
        // failures up once per back-off interval (ConnectionErrorLog): here it is detail only.
        var level = message.Facility == "FAIL" ? Serilog.Events.LogEventLevel.Debug : message.Level switch
        {
            SyslogLevel.Emergency or SyslogLevel.Alert or SyslogLevel.Critical or SyslogLevel.Error => Serilog.Events.LogEventLevel.Error,
            SyslogLevel.Warning => Serilog.Events.LogEventLevel.Warning,
            SyslogLevel.Notice or SyslogLevel.Info => Serilog.Events.LogEventLevel.Information,
            _ => Serilog.Events.LogEventLevel.Debug,
        };
        Log.Write(level, "librdkafka {Client} {Facility}: {Message}", client, message.Facility, message.Message);
    }
}
