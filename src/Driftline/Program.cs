using Driftline.Cli;
using Driftline.Configuration;
using Serilog;

Log.Logger = new LoggerConfiguration().WriteTo.Console(standardErrorFromLevel: Serilog.Events.LogEventLevel.Verbose).CreateLogger();
try
{
    using var signals = new StopSignals(args);
    var context = new CommandContext(Console.Out, Console.Error, ConfigLoader.ProcessEnvironment(), Console.OpenStandardInput)
    {
        ErrorIsTerminal = !Console.IsErrorRedirected,
        StoppedExitCode = () => signals.ExitCode,
    };
    return await DriftlineCli.RunAsync(args, context, signals.Token);
}
catch (Exception ex)
{
    Log.Fatal(ex, "Driftline stopped on an unexpected error");
    return ExitCode.Failure;
}
finally
{
    await Log.CloseAndFlushAsync();
}
