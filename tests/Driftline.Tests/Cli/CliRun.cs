using Driftline.Cli;

namespace Driftline.Tests.Cli;

/// <summary>Runs the driftline command line in-process with captured output.</summary>
internal sealed class CliRun
{
    public required int ExitCode { get; init; }

    public required string Out { get; init; }

    public required string Error { get; init; }

    public static async Task<CliRun> RunAsync(params string[] args) => await RunAsync(args, null, null);

    public static async Task<CliRun> RunAsync(string[] args, Dictionary<string, string?>? environment, byte[]? stdin) =>
        await RunAsync(args, c => c, () => new MemoryStream(stdin ?? []), Xunit.TestContext.Current.CancellationToken, environment);

    /// <summary>Runs with a context changed by <paramref name="configure"/> (an output opener, say).</summary>
    public static Task<CliRun> RunAsync(string[] args, Func<CommandContext, CommandContext> configure) =>
        RunAsync(args, configure, null, Xunit.TestContext.Current.CancellationToken);

    /// <summary>Runs with a context changed by <paramref name="configure"/>, standard input from <paramref name="stdin"/> and the given token.</summary>
    public static async Task<CliRun> RunAsync(string[] args, Func<CommandContext, CommandContext> configure, Func<Stream>? stdin,
        CancellationToken cancellation, Dictionary<string, string?>? environment = null)
    {
        var output = new StringWriter();
        var error = new StringWriter();
        var context = configure(new CommandContext(output, error, environment ?? [], stdin ?? (() => new MemoryStream())));
        int code = await DriftlineCli.RunAsync(args, context, cancellation);
        return new CliRun { ExitCode = code, Out = output.ToString(), Error = error.ToString() };
    }
}
