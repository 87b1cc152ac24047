using System.CommandLine;
using Driftline.Configuration;

namespace Driftline.Cli;

/// <summary>The <c>driftline</c> command line: every command, wired to its dependencies.</summary>
internal static class DriftlineCli
{
    /// <summary>Parses <paramref name="args"/> and runs the command; returns the exit code.</summary>
    public static async Task<int> RunAsync(string[] args, CommandContext context, CancellationToken cancellation = default)
    {
        var root = Build(context);
        PhaseMarks.Mark("commands");
        var names = root.Subcommands.Select(c => c.Name).ToList();
        bool noCommand = args.Length == 0;
        if (noCommand)
        {
            // Help, not "Required command was not provided"; still a usage mistake for scripts.
            args = ["--help"];
        }
        else if (args[0] == "help")
        {
            // `help` and `help replay` work as --help does.
            args = args.Length > 1 ? [args[1], "--help"] : ["--help"];
        }
        if (!args[0].StartsWith('-') && !names.Contains(args[0], StringComparer.Ordinal))
        {
            await context.Error.WriteLineAsync(UnknownCommand(args[0], names)).ConfigureAwait(false);
            return ExitCode.Usage;
        }
        var parsed = root.Parse(args);
        PhaseMarks.Mark("parse");
        if (parsed.Errors.Count > 0)
        {
            foreach (var error in parsed.Errors)
            {
                await context.Error.WriteLineAsync($"driftline: {error.Message}").ConfigureAwait(false);
            }
            await context.Error.WriteLineAsync($"Run 'driftline {(parsed.CommandResult.Command == root ? "" : parsed.CommandResult.Command.Name + " ")}--help' for the options.").ConfigureAwait(false);
            return ExitCode.Usage;
        }
        // Signals are the host's (StopSignals): the library's own handler would end a replay
        // after two seconds with its files half written.
        // Exceptions are ours to report (InternalError): the library's handler prints the stack.
        var invocation = new InvocationConfiguration
        {
            Output = context.Out,
            Error = context.Error,
            ProcessTerminationTimeout = null,
            EnableDefaultExceptionHandler = false,
        };
        int code;
        try
        {
            code = await parsed.InvokeAsync(invocation, cancellation).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (cancellation.IsCancellationRequested)
        {
            return context.StoppedExitCode();
        }
        catch (Exception ex)
        {
            await InternalError.ReportAsync(ex, args, context.Error).ConfigureAwait(false);
            return ExitCode.Failure;
        }
        return noCommand ? ExitCode.Usage : code;
    }

    /// <summary>Every command, in the order help lists them.</summary>
    public static RootCommand Build(CommandContext context)
    {
        var root = new RootCommand("Driftline: live probabilities from an event stream, learning from late labels, with calibration alerts")
        {
            new ReplayCommand(context).Build(),
            new RunCommand(context).Build(),
            new MonitorCommand(context).Build(),
            new DemoCommand(context).Build(),
            new CheckCommand(context).Build(),
            new FitCommand(context).Build(),
            new InspectCommand(context).Build(),
        };
        ValueNames.Apply(root);
        return root;
    }

    /// <summary>"unknown command 'frobnicate'; commands are replay, run, …", with the nearest command when one is close.</summary>
    private static string UnknownCommand(string given, IReadOnlyList<string> names)
    {
        var starting = names.Where(n => n.StartsWith(given, StringComparison.OrdinalIgnoreCase)).ToList();
        string? guess = given.Length >= 2 && starting.Count == 1 ? starting[0] : ClosestName.Find(given, names);
        string line = $"driftline: unknown command '{given}'; commands are {string.Join(", ", names)} and help";
        return guess is null ? line : $"{line}; did you mean '{guess}'?";
    }
}
