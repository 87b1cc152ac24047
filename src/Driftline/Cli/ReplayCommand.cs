using System.CommandLine;
using System.Diagnostics;
using System.Globalization;
using Driftline.Configuration;
using Driftline.Core.Events;
using Driftline.Core.Features;
using Driftline.Core.Options;
using Driftline.Core.Snapshots;
using Driftline.Output;
using Driftline.Pipeline;
using Driftline.Report;

namespace Driftline.Cli;

/// <summary>
/// <c>driftline replay FILE --out DIR [--config FILE]...</c>: the worker's pipeline over a
/// recorded file (or stdin with <c>-</c>), as fast as it goes, writing predictions, alerts,
/// dead letters, metrics, a summary, the final model and <c>report.html</c> into DIR. With
/// several <c>--config</c> files, every configuration runs over the same parsed events in one
/// pass; each writes into DIR/&lt;config name&gt;/ and DIR/report.html compares them.
/// </summary>
internal sealed class ReplayCommand(CommandContext context)
{
    /// <summary>File name of the saved model in the output folder.</summary>
    public const string ModelFile = "model.json";

    /// <summary>Monitor mode (<c>driftline monitor</c>): grade an external model's probabilities; no model is trained or saved.</summary>
    public bool MonitorOnly { get; init; }

    /// <summary>The command-line definition.</summary>
    public Command Build()
    {
        var file = new Argument<string>("FILE") { Description = "Recorded events, one JSON object per line; - reads standard input" };
        var output = new Option<string>("--out") { Description = "Folder for predictions, alerts, dead letters, metrics, summary, model and report", Required = true };
        var config = new Option<string[]>("--config")
        {
            Description = "JSON configuration file (defaults apply to anything it leaves out); repeat it to compare configurations in one pass",
            Arity = ArgumentArity.ZeroOrMore,
        };
        var warm = new Option<string?>("--warm-start") { Description = "Model file (from fit or an earlier replay) whose weights every configuration starts from" };
        var command = new Command("replay", "Replay a recorded file through the scoring pipeline") { file, output, config, warm };
        command.SetAction((result, token) => RunAsync(result.GetValue(file)!, result.GetValue(output)!, result.GetValue(config) ?? [], token, result.GetValue(warm)));
        return command;
    }

    /// <summary>Runs a replay with one configuration (or the defaults when null); returns the exit code.</summary>
    public Task<int> RunAsync(string file, string outDir, string? configPath, CancellationToken cancellation) =>
        RunAsync(file, outDir, configPath is null ? [] : [configPath], cancellation, null);

    /// <summary>Runs a replay with every configuration in <paramref name="configPaths"/> (the defaults when empty); returns the exit code.</summary>
    public async Task<int> RunAsync(string file, string outDir, IReadOnlyList<string> configPaths, CancellationToken cancellation, string? warmStart)
    {
        var configs = new List<(string Name, DriftlineOptions Options)>();
        foreach (var path in configPaths.Count == 0 ? [null] : configPaths.Cast<string?>())
        {
            var options = ConfigLoader.Load(path, context.Environment, out var errors);
            if (options is null)
            {
                return ConfigErrors.Report(context.Error, path, errors);
            }
            configs.Add((path is null ? "default" : Path.GetFileNameWithoutExtension(path), options));
        }
        if (configs.GroupBy(c => c.Name, StringComparer.OrdinalIgnoreCase).FirstOrDefault(g => g.Count() > 1) is { } clash)
        {
            await context.Error.WriteLineAsync($"driftline: two configurations are named '{clash.Key}'; each writes into a folder of its file name, so rename one of the files.").ConfigureAwait(false);
            return ExitCode.Usage;
        }
        // One parse serves every configuration, so the segment feature must be the same for all.
        if (configs.Select(c => c.Options.Monitor.SegmentBy).Distinct(StringComparer.Ordinal).Count() > 1)
        {
            var first = configs[0];
            var other = configs.First(c => !string.Equals(c.Options.Monitor.SegmentBy, first.Options.Monitor.SegmentBy, StringComparison.Ordinal));
            return ConfigErrors.Report(context.Error, other.Name,
                [new("Monitor:SegmentBy", $"'{other.Options.Monitor.SegmentBy ?? "(none)"}' here but '{first.Options.Monitor.SegmentBy ?? "(none)"}' in '{first.Name}'; configurations compared in one replay share one parse",
                    "Give every configuration the same Monitor:SegmentBy, or replay them one at a time")]);
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
            foreach (var (name, options) in configs.Where(c => c.Options.Model.HashBits != m.HashBits || c.Options.Model.Learner != m.Learner))
            {
                return ConfigErrors.Report(context.Error, name,
                    [new("Model:HashBits", $"the warm-start model has HashBits {m.HashBits} and Learner {m.Learner}, the configuration {options.Model.HashBits} and {options.Model.Learner}",
                        "Use the configuration the model was fitted with")]);
            }
        }
        bool compare = configs.Count > 1;
        var folders = configs.Select(c => compare ? Path.Combine(outDir, c.Name) : outDir).ToArray();

        using var input = InputFiles.Open(file, context);
        if (input is null)
        {
            return ExitCode.Input;
        }
        var outputs = new List<ReplayOutputs>();
        try
        {
            foreach (var folder in folders)
            {
                outputs.Add(new ReplayOutputs(folder));
            }
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            outputs.ForEach(o => o.Dispose());
            await context.Error.WriteLineAsync($"driftline: cannot write to '{outDir}': {ex.Message}").ConfigureAwait(false);
            return ExitCode.Input;
        }

        var recorders = new List<ReportRecorder>();
        var lanes = configs.Select(c => new ReplayLane(c.Options, sink =>
        {
            var recorder = new ReportRecorder(sink, new ReportData(c.Name, c.Options));
            recorders.Add(recorder);
            return recorder;
        })).ToList();
        for (int i = 0; i < lanes.Count; i++)
        {
            if (start is not null)
            {
                lanes[i].Engine.LoadModels(start);
            }
            recorders[i].Attach(lanes[i].Engine);
        }
        var names = new FeatureNames();
        var progress = new ReplayProgress(context.Error, context.ErrorIsTerminal, input.CanSeek ? input.Length : null);
        ReplayPipeline? pipeline = null;
        pipeline = new ReplayPipeline(lanes)
        {
            ProbabilitiesOnly = MonitorOnly,
            Names = names,
            AfterBatch = engine => Report(progress, pipeline!, done: false),
        };

        // One sender per configuration, fed by that configuration's writer (never the scoring thread).
        var webhooks = configs.Select(c => c.Options.Webhook.Address() is null ? null : new WebhookAlertSink(c.Options.Webhook)).ToArray();
        for (int i = 0; i < outputs.Count; i++)
        {
            outputs[i].Webhook = webhooks[i];
        }

        // On a long input, the end-of-run files' first-use costs are paid while the run goes on;
        // a short one would only wait for them.
        var warmUp = input.CanSeek && input.Length >= OutputWarmUp.MinInputBytes ? OutputWarmUp.Start(configs[0].Options, !MonitorOnly) : Task.CompletedTask;
        var clock = Stopwatch.StartNew();
        try
        {
            await pipeline.RunAsync(input, outputs, cancellation).ConfigureAwait(false);
        }
        catch (IOException ex)
        {
            await context.Error.WriteLineAsync($"driftline: reading '{file}' failed: {ex.Message}").ConfigureAwait(false);
            return ExitCode.Input;
        }
        finally
        {
            // Replay time is the pipeline's; waiting for a slow receiver to drain is not part of it.
            clock.Stop();
            outputs.ForEach(o => o.Dispose());
            foreach (var webhook in webhooks)
            {
                if (webhook is not null)
                {
                    await webhook.DisposeAsync().ConfigureAwait(false);
                }
            }
        }
        clock.Stop();
        Report(progress, pipeline, done: true);

        await warmUp.ConfigureAwait(false);
        var o = context.Out;
        for (int i = 0; i < lanes.Count; i++)
        {
            var engine = lanes[i].Engine;
            var folder = folders[i];
            SummaryWriter.Write(Path.Combine(folder, "summary.json"), engine, lanes[i].DeadLetters, clock.Elapsed, webhooks[i]);
            // The model file and the report are independent: write one while rendering the other.
            var modelWrite = Task.CompletedTask;
            if (!MonitorOnly)
            {
                var snapshot = engine.Snapshot();
                snapshot.FeatureNames = names.Entries.ToDictionary(e => e.Key.ToString(CultureInfo.InvariantCulture), e => e.Value);
                string modelPath = Path.Combine(folder, ModelFile);
                modelWrite = Task.Run(() =>
                {
                    using var model = File.Create(modelPath);
                    SnapshotCodec.Write(snapshot, model);
                }, CancellationToken.None);
            }
            var recorder = recorders[i];
            recorder.Finish();
            recorder.Data.DeadLetters = lanes[i].DeadLetters;
            recorder.Data.Elapsed = clock.Elapsed;
            ReportWriter.WriteSingle(Path.Combine(folder, ReportWriter.FileName), file, recorder.Data);
            await modelWrite.ConfigureAwait(false);

            if (compare)
            {
                o.WriteLine($"[{configs[i].Name}]");
            }
            WriteResult(o, pipeline, lanes[i], outputs[i], clock.Elapsed, folder);
            if (webhooks[i] is { } hook)
            {
                o.WriteLine($"Webhook: {hook.Sent:N0} alerts delivered, {hook.Failed:N0} failed, {hook.Dropped:N0} dropped.");
            }
        }
        if (compare)
        {
            ReportWriter.WriteComparison(Path.Combine(outDir, ReportWriter.FileName), file, recorders.Select(r => r.Data).ToList());
            o.WriteLine($"Comparison of {configs.Count} configurations in {Path.GetFullPath(Path.Combine(outDir, ReportWriter.FileName))}");
        }
        return ExitCode.Ok;
    }

    private static void Report(ReplayProgress progress, ReplayPipeline pipeline, bool done)
    {
        var c = pipeline.Engine.Counters;
        if (done)
        {
            progress.Done(pipeline.BytesRead, c.Events, c.Labels, c.LateLabels, c.AlertsRaised);
        }
        else
        {
            progress.Report(pipeline.BytesRead, c.Events, c.Labels, c.LateLabels, c.AlertsRaised);
        }
    }

    private void WriteResult(TextWriter o, ReplayPipeline pipeline, ReplayLane lane, ReplayOutputs outputs, TimeSpan elapsed, string folder)
    {
        var engine = lane.Engine;
        var c = engine.Counters;
        var total = engine.Totals.Current;
        var prior = engine.PriorTotals.Current;
        string what = MonitorOnly ? $"{c.Probabilities:N0} probabilities" : $"{c.Events:N0} events scored";
        o.WriteLine($"{(MonitorOnly ? "Monitored" : "Replayed")} {pipeline.Lines:N0} lines in {elapsed.TotalSeconds:0.00} s: {what}, {c.Labels:N0} labels ({c.LateLabels:N0} late), {engine.Pending.Expired:N0} expired, {lane.DeadLetters:N0} dead letters.");
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
        o.WriteLine(MonitorOnly
            ? $"Outputs in {Path.GetFullPath(folder)}: alerts.jsonl, dead-letters.jsonl, metrics.csv, summary.json, {ReportWriter.FileName}"
            : $"Outputs in {Path.GetFullPath(folder)}: predictions.jsonl, alerts.jsonl, dead-letters.jsonl, metrics.csv, summary.json, {ModelFile}, {ReportWriter.FileName}");
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
