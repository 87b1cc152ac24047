using Driftline.Cli;
using Driftline.Configuration;
using System.Runtime.InteropServices;
using Serilog;

PhaseMarks.Mark("main");
// The console sink is built on the first log event: a replay that logs nothing never pays for it.
Log.Logger = new LoggerConfiguration()
    .WriteTo.Sink(new DeferredSink(() => new LoggerConfiguration().WriteTo.Console(standardErrorFromLevel: Serilog.Events.LogEventLevel.Verbose).CreateLogger()))
    .CreateLogger();
try
{
    using var signals = new StopSignals(args);
    // SIGXFSZ (a file-size limit reached, 25 on Linux) would abort the runtime; ignored, the
    // write fails with EFBIG instead, and that is reported as any failed write is (exit 4).
    using var fileSizeLimit = OperatingSystem.IsLinux() ? PosixSignalRegistration.Create((PosixSignal)25, c => c.Cancel = true) : null;
    var context = new CommandContext(Console.Out, Console.Error, ConfigLoader.ProcessEnvironment(), Console.OpenStandardInput)
    {
        ErrorIsTerminal = !Console.IsErrorRedirected,
        StoppedExitCode = () => signals.ExitCode,
    };
    return await DriftlineCli.RunAsync(args, context, signals.Token);
}
catch (Exception ex)
{
    // Outside a command (signal set-up, say): the same one line and trace file as inside.
    await InternalError.ReportAsync(ex, args, Console.Error);
    return ExitCode.Failure;
}
finally
{
    await Log.CloseAndFlushAsync();
    PhaseMarks.Mark("exit");
    PhaseMarks.Write(Console.Error);
}
