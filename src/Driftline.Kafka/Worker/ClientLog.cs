using Confluent.Kafka;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>librdkafka's own log lines, forwarded to Serilog (called on librdkafka's threads: no client calls here).</summary>
internal static class ClientLog
{
    /// <summary>Writes a librdkafka log line to the worker's log at the matching level.</summary>
    public static void Write(string client, LogMessage message)
    {
        var level = message.Level switch
        {
            SyslogLevel.Emergency or SyslogLevel.Alert or SyslogLevel.Critical or SyslogLevel.Error => Serilog.Events.LogEventLevel.Error,
            SyslogLevel.Warning => Serilog.Events.LogEventLevel.Warning,
            SyslogLevel.Notice or SyslogLevel.Info => Serilog.Events.LogEventLevel.Information,
            _ => Serilog.Events.LogEventLevel.Debug,
        };
        Log.Write(level, "librdkafka {Client} {Facility}: {Message}", client, message.Facility, message.Message);
    }
}
