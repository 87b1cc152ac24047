using Serilog.Core;
using Serilog.Events;

namespace Driftline.Cli;

/// <summary>
/// A log sink made on the first event it receives. Building the console sink (its theme, its
/// output template, the console streams) costs tens of milliseconds at start-up, and most
/// commands, a clean replay among them, never log a line; they now skip that cost.
/// Thread-safe: the first emitting thread builds the sink, the others wait for it.
/// </summary>
internal sealed class DeferredSink : ILogEventSink, IDisposable, IAsyncDisposable
{
    private readonly Lazy<Logger> _inner;

    /// <summary>Holds <paramref name="create"/> until an event arrives.</summary>
    public DeferredSink(Func<Logger> create)
    {
        ArgumentNullException.ThrowIfNull(create);
        _inner = new Lazy<Logger>(create, LazyThreadSafetyMode.ExecutionAndPublication);
    }

    /// <summary>Whether the real sink has been made (an event has been written).</summary>
    public bool IsCreated => _inner.IsValueCreated;

    /// <inheritdoc />
    public void Emit(LogEvent logEvent) => _inner.Value.Write(logEvent);

    /// <summary>Flushes and disposes the real sink if it was made; nothing otherwise.</summary>
    public void Dispose()
    {
        if (_inner.IsValueCreated)
        {
            _inner.Value.Dispose();
        }
    }

    /// <inheritdoc cref="Dispose" />
    public async ValueTask DisposeAsync()
    {
        if (_inner.IsValueCreated)
        {
            await _inner.Value.DisposeAsync().ConfigureAwait(false);
        }
    }
}
