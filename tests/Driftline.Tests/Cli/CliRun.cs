using Driftline.Cli;

namespace Driftline.Tests.Cli;

/// <summary>Runs the driftline command line in-process with captured output.</summary>
internal sealed class CliRun
{
    public required int ExitCode { get; init; }

    public required string Out { get; init; }

    public required string Error { get; init; }

    public static async Task<CliRun> RunAsync(params string[] args) => await RunAsync(args, null, null);

    public static async Task<CliRun> RunAsync(string[] args, Dictionary<string, string?>? environment, byte[]? stdin)
    {
        var output = new StringWriter();
        var error = new StringWriter();
        var context = new CommandContext(output, error, environment ?? [], () => new MemoryStream(stdin ?? []));
        int code = await DriftlineCli.RunAsync(args, context, Xunit.TestContext.Current.CancellationToken);
        return new CliRun { ExitCode = code, Out = output.ToString(), Error = error.ToString() };
    }
}
