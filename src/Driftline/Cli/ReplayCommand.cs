using System.CommandLine;
using System.Diagnostics;
using Driftline.Configuration;
using Driftline.Core.Events;
using Driftline.Core.Snapshots;
using Driftline.Output;
using Driftline.Pipeline;

namespace Driftline.Cli;

/// <summary>
/// <c>driftline replay FILE --out DIR [--config FILE]</c>: the worker's pipeline over a
/// recorded file (or stdin with <c>-</c>), as fast as it goes, writing predictions, alerts,
/// dead letters, metrics, a summary and the final model into DIR.
/// </summary>
internal sealed class ReplayCommand(CommandContext context)
{
    /// <summary>File name of the saved model in the output folder.</summary>
    public const string ModelFile = "model.json";

    /// <summary>The command-line definition.</summary>
    public Command Build()
    {
        var file = new Argument<string>("FILE") { Description = "Recorded events, one JSON object per line; - reads standard input" };
        var output = new Option<string>("--out") { Description = "Folder for predictions, alerts, dead letters, metrics, summary and model", Required = true };
        var config = new Option<string?>("--config") { Description = "JSON configuration file (defaults apply to anything it leaves out)" };
        var warm = new Option<string?>("--warm-start") { Description = "Model file (from fit or an earlier replay) whose weights the run starts from" };
        var command = new Command("replay", "Replay a recorded file through the scoring pipeline") { file, output, config, warm };
        command.SetAction((result, token) => RunAsync(result.GetValue(file)!, result.GetValue(output)!, result.GetValue(config), token, result.GetValue(warm)));
        return command;
    }

    /// <summary>Runs a replay; returns the exit code.</summary>
    public async Task<int> RunAsync(string file, string outDir, string? configPath, CancellationToken cancellation, string? warmStart = null)
    {
        var options = ConfigLoader.Load(configPath, context.Environment, out var errors);
        if (options is null)
        {
            return ConfigErrors.Report(context.Error, configPath, errors);
        }
        EngineSnapshot? start = null;
        if (warmStart is not null)
        {
            start = ReadModel(warmStart);
            if (start is null)
            {
                return ExitCode.Input;
            }
            var m = start.Options.Model;
            if (m.HashBits != options.Model.HashBits || m.Learner != options.Model.Learner)
            {
                return ConfigErrors.Report(context.Error, configPath,
                    [new("Model:HashBits", $"the warm-start model has HashBits {m.HashBits} and Learner {m.Learner}, the configuration {options.Model.HashBits} and {options.Model.Learner}",
                        "Use the configuration the model was fitted with")]);
            }
        }
        using var input = InputFiles.Open(file, context);
        if (input is null)
        {
            return ExitCode.Input;
        }
        ReplayOutputs outputs;
        try
        {
            outputs = new ReplayOutputs(outDir);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            await context.Error.WriteLineAsync($"driftline: cannot write to '{outDir}': {ex.Message}").ConfigureAwait(false);
            return ExitCode.Input;
        }

        var clock = Stopwatch.StartNew();
        var pipeline = new ReplayPipeline(options);
        if (start is not null)
        {
            pipeline.Engine.LoadModels(start);
        }
        using (outputs)
        {
            try
            {
                await pipeline.RunAsync(input, outputs, cancellation).ConfigureAwait(false);
            }
            catch (IOException ex)
            {
                await context.Error.WriteLineAsync($"driftline: reading '{file}' failed: {ex.Message}").ConfigureAwait(false);
                return ExitCode.Input;
            }
        }
        clock.Stop();

        var engine = pipeline.Engine;
        SummaryWriter.Write(Path.Combine(outDir, "summary.json"), engine, pipeline.DeadLetters, clock.Elapsed);
        using (var model = File.Create(Path.Combine(outDir, ModelFile)))
        {
            SnapshotCodec.Write(engine.Snapshot(), model);
        }

        var o = context.Out;
        var c = engine.Counters;
        var total = engine.Totals.Current;
        var prior = engine.PriorTotals.Current;
        o.WriteLine($"Replayed {pipeline.Lines:N0} lines in {clock.Elapsed.TotalSeconds:0.0} s: {c.Events:N0} events scored, {c.Labels:N0} labels ({c.LateLabels:N0} late), {engine.Pending.Expired:N0} expired, {pipeline.DeadLetters:N0} dead letters.");
        if (total.IsReady)
        {
            o.WriteLine($"Log-loss {total.LogLoss:0.0000} against {prior.LogLoss:0.0000} for the class prior; Brier {total.Brier:0.0000}; ECE {total.Ece:0.0000}.");
        }
        foreach (var alert in outputs.AlertsWritten)
        {
            o.WriteLine($"Alert {alert.Rule} at label {alert.Labels:N0} (event {alert.EventId}): {RecordJson.Describe(alert)}");
        }
        if (outputs.AlertsWritten.Count == 0)
        {
            o.WriteLine("No alerts.");
        }
        o.WriteLine($"Outputs in {Path.GetFullPath(outDir)}: predictions.jsonl, alerts.jsonl, dead-letters.jsonl, metrics.csv, summary.json, {ModelFile}");
        return ExitCode.Ok;
    }

    private EngineSnapshot? ReadModel(string path)
    {
        try
        {
            using var stream = File.OpenRead(path);
            return SnapshotCodec.Read(stream);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or InvalidDataException)
        {
            context.Error.WriteLine($"driftline: cannot load model '{path}': {ex.Message}");
            return null;
        }
    }
}
