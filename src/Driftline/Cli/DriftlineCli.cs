using System.CommandLine;

namespace Driftline.Cli;

/// <summary>The <c>driftline</c> command line: every command, wired to its dependencies.</summary>
internal static class DriftlineCli
{
    /// <summary>Parses <paramref name="args"/> and runs the command; returns the exit code.</summary>
    public static async Task<int> RunAsync(string[] args, CommandContext context, CancellationToken cancellation = default)
    {
        var root = new RootCommand("Driftline: live probabilities from an event stream, learning from late labels, with calibration alerts")
        {
            new ReplayCommand(context).Build(),
            new DemoCommand(context).Build(),
            new CheckCommand(context).Build(),
            new FitCommand(context).Build(),
            new InspectCommand(context).Build(),
            new MonitorCommand(context).Build(),
            new RunCommand(context).Build(),
        };
        var parsed = root.Parse(args);
        if (parsed.Errors.Count > 0)
        {
            foreach (var error in parsed.Errors)
            {
                await context.Error.WriteLineAsync($"driftline: {error.Message}").ConfigureAwait(false);
            }
            await context.Error.WriteLineAsync("Run 'driftline --help' for the commands and options.").ConfigureAwait(false);
            return ExitCode.Usage;
        }
        // Signals are the host's (StopSignals): the library's own handler would end a replay
        // after two seconds with its files half written.
        var invocation = new InvocationConfiguration { Output = context.Out, Error = context.Error, ProcessTerminationTimeout = null };
        return await parsed.InvokeAsync(invocation, cancellation).ConfigureAwait(false);
    }
}
