using System.Diagnostics;
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
    private long _suspended;

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
        if (e.EventId == 9)
        {
            Volatile.Write(ref _suspended, Stopwatch.GetTimestamp());
        }
        else if (e.EventId == 3 && Volatile.Read(ref _suspended) is long from and not 0)
        {
            double ms = Stopwatch.GetElapsedTime(from).TotalMilliseconds;
            lock (_gate)
            {
                _pauses.Add(ms);
            }
        }
    }
}
