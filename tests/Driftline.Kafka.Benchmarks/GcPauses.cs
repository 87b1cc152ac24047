using System.Diagnostics.Tracing;

namespace Driftline.Kafka.Benchmarks;

/// <summary>
/// Every garbage collection's pause in this process, from the runtime's own events (the
/// execution engine suspended, then restarted: GCSuspendEEBegin_V1 = 9, GCRestartEEEnd_V1 = 3,
/// in the GC keyword 0x1 of Microsoft-Windows-DotNETRuntime, as dotnet-counters and dotnet-trace
/// read them), so the benchmark can name the longest one in a window and not only the sum.
/// </summary>
internal sealed class GcPauses : EventListener
{
    private readonly object _gate = new();
    private readonly List<double> _pauses = [];
    private DateTime _suspended;

    /// <summary>The pauses (ms) since the last call, and clears them.</summary>
    public List<double> Take()
    {
        lock (_gate)
        {
            var taken = _pauses.ToList();
            _pauses.Clear();
            return taken;
        }
    }

    protected override void OnEventSourceCreated(EventSource source)
    {
        if (source.Name == "Microsoft-Windows-DotNETRuntime")
        {
            EnableEvents(source, EventLevel.Informational, (EventKeywords)0x1);
        }
    }

    protected override void OnEventWritten(EventWrittenEventArgs e)
    {
        // The events reach the listener later, on a thread of its own: their own time stamps tell the pause.
        if (e.EventId == 9)
        {
            lock (_gate)
            {
                _suspended = e.TimeStamp;
            }
        }
        else if (e.EventId == 3)
        {
            lock (_gate)
            {
                if (_suspended != default)
                {
                    _pauses.Add((e.TimeStamp - _suspended).TotalMilliseconds);
                    _suspended = default;
                }
            }
        }
    }
}
