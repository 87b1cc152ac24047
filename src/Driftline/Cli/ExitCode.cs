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

    /// <summary>An input file cannot be read, or an output folder cannot be written.</summary>
    public const int Input = 4;

    /// <summary>The live worker stopped on a fatal Kafka error (nothing was committed past safe work).</summary>
    public const int Kafka = 5;
}
