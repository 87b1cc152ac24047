using Confluent.Kafka;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// The clients' connection errors (brokers refused, unresolvable, all down), one log line per
/// reconnect back-off interval instead of one for every attempt of every client. librdkafka
/// retries a refused connection many times a second (about 20 a second for a consumer looking
/// for its group coordinator, measured against a closed port), and reports each attempt both
/// through its log and through the error callback, so an unreachable broker used to write
/// about 50 lines a second. Called from the clients' poll threads: thread-safe.
/// </summary>
internal sealed class ConnectionErrorLog(TimeSpan interval, TimeProvider? clock = null)
{
    private readonly TimeProvider _clock = clock ?? TimeProvider.System;
    private readonly Lock _gate = new();
    private readonly SortedSet<string> _clients = new(StringComparer.Ordinal);
    private long _unlogged;
    private long _lastLine = long.MinValue;
    private long _firstUnlogged;
    private bool _down;

    /// <summary>The interval between two lines while the errors go on.</summary>
    public TimeSpan Interval { get; } = interval;

    /// <summary>True for the errors this log sums up: the ones librdkafka recovers from by reconnecting.</summary>
    public static bool IsConnectionError(Error error) =>
        error.Code is ErrorCode.Local_Transport or ErrorCode.Local_AllBrokersDown or ErrorCode.Local_Resolve;

    /// <summary>Counts one connection error; logs it when no line was written in the last <see cref="Interval"/>, with the count of those it stood for.</summary>
    public void Add(string client, Error error)
    {
        ArgumentNullException.ThrowIfNull(error);
        lock (_gate)
        {
            long now = _clock.GetTimestamp();
            _clients.Add(client);
            if (_unlogged == 0)
            {
                _firstUnlogged = now;
            }
            _unlogged++;
            bool first = !_down;
            if (!first && _clock.GetElapsedTime(_lastLine, now) < Interval)
            {
                return;
            }
            if (first)
            {
                Log.Warning("Kafka {Client:l}: {Reason:l} ({Code}); librdkafka keeps retrying, and further connection errors are summed up once every {Interval} s",
                    client, error.Reason, error.Code, Interval.TotalSeconds);
            }
            else
            {
                Log.Warning("Kafka brokers still unreachable: {Count} connection errors in the last {Seconds:0} s from the {Clients:l}; the latest: {Reason:l} ({Code})",
                    _unlogged, _clock.GetElapsedTime(_firstUnlogged, now).TotalSeconds, string.Join(", ", _clients), error.Reason, error.Code);
            }
            _down = true;
            _lastLine = now;
            _unlogged = 0;
            _clients.Clear();
        }
    }

    /// <summary>The brokers answer again: one line with the errors not logged yet, if the errors were logged at all.</summary>
    public void Recovered()
    {
        lock (_gate)
        {
            if (!_down)
            {
                return;
            }
            Log.Information("Kafka brokers reachable again ({Count} connection errors since the last line)", _unlogged);
            _down = false;
            _unlogged = 0;
            _clients.Clear();
        }
    }
}
