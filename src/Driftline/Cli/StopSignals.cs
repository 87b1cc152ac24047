using System.Runtime.InteropServices;

namespace Driftline.Cli;

/// <summary>
/// SIGINT and SIGTERM as a cancellation token: the first of either asks the running command
/// to stop cleanly (a replay flushes what it scored and writes no summary); a second one is
/// left to the system's default action, so a stuck process can still be ended from the keyboard.
/// Only commands that stop cleanly on their token take the signals over; the others (fit,
/// demo, check, inspect) end at once, as any program does, and leave no file half written
/// because every file they write appears by rename.
/// </summary>
internal sealed class StopSignals : IDisposable
{
    private readonly CancellationTokenSource _stop = new();
    private readonly PosixSignalRegistration? _interrupt;
    private readonly PosixSignalRegistration? _terminate;
    private int _signal;

    /// <summary>Registers the handlers for the command in <paramref name="args"/> if it stops cleanly; dispose to restore the defaults.</summary>
    public StopSignals(string[] args)
    {
        ArgumentNullException.ThrowIfNull(args);
        if (args.Length > 0 && StopsCleanly.Contains(args[0], StringComparer.Ordinal))
        {
            _interrupt = PosixSignalRegistration.Create(PosixSignal.SIGINT, Handle);
            _terminate = PosixSignalRegistration.Create(PosixSignal.SIGTERM, Handle);
        }
    }

    /// <summary>The commands that watch their token and stop cleanly on it.</summary>
    public static IReadOnlyList<string> StopsCleanly { get; } = ["replay", "monitor", "run"];

    /// <summary>Cancelled by the first signal.</summary>
    public CancellationToken Token => _stop.Token;

    /// <summary><see cref="ExitCode.Terminated"/> after SIGTERM, else <see cref="ExitCode.Interrupted"/>.</summary>
    public int ExitCode => Volatile.Read(ref _signal) == (int)PosixSignal.SIGTERM ? Cli.ExitCode.Terminated : Cli.ExitCode.Interrupted;

    private void Handle(PosixSignalContext context)
    {
        if (Interlocked.CompareExchange(ref _signal, (int)context.Signal, 0) != 0)
        {
            return;
        }
        context.Cancel = true;
        _stop.Cancel();
    }

    /// <inheritdoc />
    public void Dispose()
    {
        _interrupt?.Dispose();
        _terminate?.Dispose();
        _stop.Dispose();
    }
}
