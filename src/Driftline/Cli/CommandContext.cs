namespace Driftline.Cli;

/// <summary>What every command gets from its host: where to write and the environment to read overrides from.</summary>
/// <param name="Out">Results and human-readable summaries.</param>
/// <param name="Error">Error messages and progress.</param>
/// <param name="Environment">Environment variables (for <c>DRIFTLINE_</c> overrides).</param>
/// <param name="StandardInput">Opens standard input, for the FILE argument <c>-</c>.</param>
internal sealed record CommandContext(TextWriter Out, TextWriter Error, IDictionary<string, string?> Environment, Func<Stream> StandardInput)
{
    /// <summary>True when <see cref="Error"/> is a terminal, so progress can redraw one line in place; default false (plain lines).</summary>
    public bool ErrorIsTerminal { get; init; }

    /// <summary>
    /// Opens a new output file exclusively; default <see cref="Output.OutputFile.CreateNew"/>.
    /// Tests put a stream here that fails as a full disk does.
    /// </summary>
    public Func<string, Stream> CreateOutput { get; init; } = Output.OutputFile.CreateNew;

    /// <summary>
    /// The exit code of a run stopped by its cancellation token: the host knows which signal
    /// asked (130 for SIGINT, 143 for SIGTERM); default <see cref="ExitCode.Interrupted"/>.
    /// </summary>
    public Func<int> StoppedExitCode { get; init; } = () => ExitCode.Interrupted;
}
