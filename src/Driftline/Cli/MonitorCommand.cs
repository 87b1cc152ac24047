using System.CommandLine;

namespace Driftline.Cli;

/// <summary>
/// <c>driftline monitor FILE --out DIR [--config FILE]</c>: calibration and loss windows and
/// alerts over another model's probabilities. Records are <c>{"id","p","label"}</c>, or
/// <c>{"id","p"}</c> graded later by a label-only record with the same id. The same pipeline
/// and outputs as replay, without training or saving a model.
/// </summary>
internal sealed class MonitorCommand(CommandContext context)
{
    /// <summary>The command-line definition.</summary>
    public Command Build()
    {
        var file = new Argument<string>("FILE") { Description = "Probabilities and labels, one JSON object per line; - reads standard input" };
        var output = new Option<string>("--out") { Description = "Folder for alerts, dead letters, metrics, summary and report", Required = true };
        var config = new Option<string[]>("--config")
        {
            Description = "JSON configuration file (the Labels, Monitor and Alerts sections apply); repeat it to compare",
            Arity = ArgumentArity.ZeroOrMore,
        };
        var command = new Command("monitor", "Watch the calibration of an external model's probabilities") { file, output, config };
        command.SetAction((result, token) =>
        {
            string path = result.GetValue(file)!;
            if (path != "-" && MonitorInputCheck.RecordsWithoutProbability(path) is > 0 and var records)
            {
                context.Error.WriteLine($"driftline: none of the first {records:N0} records in '{path}' carries a probability \"p\", so there is nothing to monitor; monitor grades another model's probabilities. To score these events with Driftline's own model, run: driftline replay {path} --out DIR");
                return Task.FromResult(ExitCode.Input);
            }
            return new ReplayCommand(context) { MonitorOnly = true }.RunAsync(path, result.GetValue(output)!, result.GetValue(config) ?? [], token, null);
        });
        return command;
    }
}
