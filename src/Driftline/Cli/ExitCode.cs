namespace Driftline.Cli;

/// <summary>Process exit codes: one per kind of failure, so scripts can tell them apart.</summary>
internal static class ExitCode
{
    /// <summary>Done.</summary>
    public const int Ok = 0;

    /// <summary>An unexpected failure inside Driftline (a bug or a failing stage).</summary>
    public const int Failure = 1;

    /// <summary>The command line is wrong (unknown command or option, missing argument).</summary>
    public const int Usage = 2;

    /// <summary>The configuration is invalid.</summary>
    public const int Config = 3;

    /// <summary>
    /// An input file cannot be read (missing, a folder, a damaged model), or an output cannot
    /// be written (full disk, a folder where a file goes, --out naming a file); one line says which.
    /// </summary>
    public const int Input = 4;

    /// <summary>The live worker stopped on a fatal Kafka error (nothing was committed past safe work).</summary>
    public const int Kafka = 5;

    /// <summary>The live worker stopped because no broker was reachable for <c>Worker:ExitAfterBrokerDown</c>.</summary>
    public const int BrokerDown = 7;

    /// <summary>
    /// <c>fit</c> read its input but the data cannot identify the model: no labelled events, features still
    /// collinear after the reference levels are left out, separated labels, one label only,
    /// too many features for a dense fit, or no convergence; one line names the cause and the fix.
    /// </summary>
    public const int FitFailed = 6;

    /// <summary>
    /// A replay or monitor stopped by SIGINT (Ctrl-C) before the end of its input: 128 + 2, as
    /// shells report a process ended by that signal (common practice).
    /// </summary>
    public const int Interrupted = 130;

    /// <summary>A replay or monitor stopped by SIGTERM before the end of its input: 128 + 15 (common practice).</summary>
    public const int Terminated = 143;
}
