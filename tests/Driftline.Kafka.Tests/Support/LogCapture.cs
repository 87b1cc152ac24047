using Serilog;
using Serilog.Core;
using Serilog.Events;

namespace Driftline.Kafka.Tests.Support;

/// <summary>
/// Sends the global Serilog logger's events to a list until disposed. Tests run in parallel,
/// so other tests' events may arrive too: filter by something only the test's own run logs.
/// </summary>
internal sealed class LogCapture : ILogEventSink, IDisposable
{
    private readonly ILogger _previous = Log.Logger;
    private readonly List<LogEvent> _events = [];

    public LogCapture() => Log.Logger = new LoggerConfiguration().MinimumLevel.Verbose().WriteTo.Sink(this).CreateLogger();

    public IReadOnlyList<string> Messages(LogEventLevel level)
    {
        lock (_events)
        {
            return _events.Where(e => e.Level == level).Select(e => e.RenderMessage()).ToList();
        }
    }

    public void Emit(LogEvent logEvent)
    {
        lock (_events)
        {
            _events.Add(logEvent);
        }
    }

    public void Dispose() => Log.Logger = _previous;
}
