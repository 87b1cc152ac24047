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
    private readonly List<string> _deep = [];
    private DateTime _suspended;

    /// <summary>The pauses (ms) since the last call, and clears them (and the reasons of gen1 and gen2 collections).</summary>
    public List<double> Take()
    {
        lock (_gate)
        {
            var taken = _pauses.ToList();
            _pauses.Clear();
            _deep.Clear();
            return taken;
        }
    }

    /// <summary>Each gen1 and gen2 collection since the last <see cref="Take"/>, as "gen/reason", in order.</summary>
    public string DeepReasons()
    {
        lock (_gate)
        {
            return _deep.Count == 0 ? "none" : string.Join(" ", _deep);
        }
    }

    /// <summary>
    /// The runtime's reason codes (GCStart_V2's Reason field, documented with the runtime's GC
    /// events: 0 small allocation, 1 induced, 4 large-object allocation, 5 out of space in the
    /// small-object heap, 6 out of space in the large-object heap).
    /// </summary>
    private static string Reason(uint code) => code switch
    {
        0 => "alloc-small",
        1 => "induced",
        2 => "low-memory",
        4 => "alloc-large",
        5 => "oos-small",
        6 => "oos-large",
        _ => "reason" + code,
    };

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
        if (e.EventId == 1 && e.Payload is { Count: >= 3 } start && Convert.ToUInt32(start[1], System.Globalization.CultureInfo.InvariantCulture) is uint depth and > 0)
        {
            // GCStart_V2: Count, Depth, Reason, Type, ClrInstanceID, ...
            lock (_gate)
            {
                _deep.Add($"{depth}/{Reason(Convert.ToUInt32(start[2], System.Globalization.CultureInfo.InvariantCulture))}");
            }
        }
        else if (e.EventId == 9)
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
