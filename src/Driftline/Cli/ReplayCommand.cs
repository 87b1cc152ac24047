using System.CommandLine;
using System.Diagnostics;
using System.Globalization;
using Driftline.Configuration;
using Driftline.Core.Challengers;
using Driftline.Core.Events;
using Driftline.Core.Features;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
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

    /// <summary>File name of the summary in the output folder: written last, so its presence means the run finished.</summary>
    public const string SummaryFile = "summary.json";

    /// <summary>The files written at the end of a run, which a new run into the folder removes first (the summary first).</summary>
    public static IReadOnlyList<string> EndFiles { get; } = [SummaryFile, ModelFile, ReportWriter.FileName];

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
        var challenger = new Option<string[]>("--challenger")
        {
            Description = "A configuration scored in the shadow and judged against the champion (the first --config, or the defaults) by a sequential test on their per-label log-loss; repeat for several",
            Arity = ArgumentArity.ZeroOrMore,
            HelpName = "FILE",
        };
        var warm = new Option<string?>("--warm-start") { Description = "Model file (from fit or an earlier replay) whose weights every configuration starts from" };
        var command = new Command("replay", "Replay a recorded file through the scoring pipeline") { file, output, config, challenger, warm };
        command.SetAction((result, token) => RunAsync(result.GetValue(file)!, result.GetValue(output)!, Champion(result.GetValue(config), result.GetValue(challenger)), token, result.GetValue(warm)));
        return command;
    }

    // Challengers run as further configurations after the champion's: the defaults when no
    // --config names one.
    private static string[] Champion(string[]? configs, string[]? challengers) =>
        challengers is not { Length: > 0 } ? configs ?? [] : [.. configs is { Length: > 0 } ? configs : [DefaultsName], .. challengers];

    /// <summary>Stands for the defaults in a list of configuration paths (a champion with no file).</summary>
    public const string DefaultsName = "(defaults)";

    /// <summary>Runs a replay with one configuration (or the defaults when null); returns the exit code.</summary>
    public Task<int> RunAsync(string file, string outDir, string? configPath, CancellationToken cancellation) =>
        RunAsync(file, outDir, configPath is null ? [] : [configPath], cancellation, null);

    /// <summary>Runs a replay with every configuration in <paramref name="configPaths"/> (the defaults when empty); returns the exit code.</summary>
    public async Task<int> RunAsync(string file, string outDir, IReadOnlyList<string> configPaths, CancellationToken cancellation, string? warmStart)
    {
        var configs = new List<(string Name, DriftlineOptions Options)>();
        foreach (var path in configPaths.Count == 0 ? [null] : configPaths.Select(p => p == DefaultsName ? null : p))
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
        // Labels are read as class indexes by the shared parse, so the classes must agree too.
        static string ClassesOf(DriftlineOptions o) => o.Model.Classes is { } c ? string.Join(", ", c) : "(binary)";
        if (configs.Select(c => ClassesOf(c.Options)).Distinct(StringComparer.Ordinal).Count() > 1)
        {
            var first = configs[0];
            var other = configs.First(c => ClassesOf(c.Options) != ClassesOf(first.Options));
            return ConfigErrors.Report(context.Error, other.Name,
                [new("Model:Classes", $"'{ClassesOf(other.Options)}' here but '{ClassesOf(first.Options)}' in '{first.Name}'; configurations compared in one replay share one parse",
                    "Give every configuration the same Model:Classes, or replay them one at a time")]);
        }
        EngineSnapshot? start = null;
        if (warmStart is not null)
        {
            start = SavedModel.Read(warmStart, context);
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
            foreach (var (name, options) in configs.Where(c => ClassesOf(c.Options) != ClassesOf(start.Options)))
            {
                return ConfigErrors.Report(context.Error, name,
                    [new("Model:Classes", $"the warm-start model has classes {ClassesOf(start.Options)}, the configuration {ClassesOf(options)}",
                        "Use the classes, in the same order, the model was trained with")]);
            }
        }
        PhaseMarks.Mark("config");
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
            // The previous run's end files go before anything is written, so a run killed from
            // here on never leaves an old summary beside new predictions.
            OutputFolder.Create(outDir);
            OutputFolder.RemovePrevious(outDir, EndFiles);
            foreach (var folder in compare ? folders : [])
            {
                OutputFolder.CreateInside(folder);
                OutputFolder.RemovePrevious(folder, EndFiles);
            }
            foreach (var folder in folders)
            {
                outputs.Add(new ReplayOutputs(folder, context.CreateOutput, configs[0].Options.Model.Classes,
                    served: configs[Math.Min(outputs.Count, configs.Count - 1)].Options.Recalibration.Enabled));
            }
        }
        catch (OutputException ex)
        {
            outputs.ForEach(o => o.Dispose());
            await context.Error.WriteLineAsync(ex.Line).ConfigureAwait(false);
            return ExitCode.Input;
        }

        PhaseMarks.Mark("outputs-opened");
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
        // Every configuration after the first is judged against it on the same labels; a
        // decision is a challenger-better line in the champion's alerts. With
        // Challengers:AutoPromote the winner's state is restored into the champion's lane.
        ChallengerPanel? panel = null;
        if (lanes.Count > 1)
        {
            panel = new ChallengerPanel(lanes[0].Engine, configs[0].Options.Challengers, snapshot =>
            {
                var engine = ScoringEngine.Restore(snapshot, lanes[0].Output);
                lanes[0].Engine = engine;
                recorders[0].Attach(engine);
                return engine;
            });
            for (int i = 1; i < lanes.Count; i++)
            {
                var judge = panel.Add(configs[i].Name, lanes[i].Engine).Judge;
                recorders[i].Data.Challenger = judge;
                recorders[i].Data.ChallengerCurve = new ChallengerCurve();
                recorders[i].Data.ChallengerCurve!.Follow(judge);
            }
        }
        var names = new FeatureNames();
        var progress = new ReplayProgress(context.Error, context.ErrorIsTerminal, input.CanSeek ? input.Length : null);
        ReplayPipeline? pipeline = null;
        pipeline = new ReplayPipeline(lanes)
        {
            ProbabilitiesOnly = MonitorOnly,
            Names = names,
            Panel = panel,
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
        PhaseMarks.Mark("engine");
        var clock = Stopwatch.StartNew();
        try
        {
            await pipeline.RunAsync(input, outputs, cancellation).ConfigureAwait(false);
            // Closing flushes the last predictions: on a full disk that fails here, not silently.
            outputs.ForEach(o => o.Close());
        }
        catch (OutputException ex)
        {
            await context.Error.WriteLineAsync(ex.Line).ConfigureAwait(false);
            return ExitCode.Input;
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
        PhaseMarks.Mark("pipeline");
        Report(progress, pipeline, done: true);
        if (pipeline.Stopped)
        {
            // A stopped run is visibly unfinished: its line files hold what was scored, and no
            // summary, model or report claims more.
            await context.Error.WriteLineAsync($"driftline: stopped after {pipeline.Lines:N0} lines; what was scored is in {Path.GetFullPath(outDir)}, and no summary, model or report was written.").ConfigureAwait(false);
            return context.StoppedExitCode();
        }

        await warmUp.ConfigureAwait(false);
        try
        {
            await WriteEndFilesAsync(file, outDir, configs.Select(c => c.Name).ToList(), folders, lanes, recorders, names, webhooks, clock.Elapsed, panel?.Promotions).ConfigureAwait(false);
        }
        catch (OutputException ex)
        {
            await context.Error.WriteLineAsync(ex.Line).ConfigureAwait(false);
            return ExitCode.Input;
        }

        PhaseMarks.Mark("end-files");
        var o = context.Out;
        for (int i = 0; i < lanes.Count; i++)
        {
            if (compare)
            {
                o.WriteLine($"[{configs[i].Name}]");
            }
            WriteResult(o, pipeline, lanes[i], outputs[i], clock.Elapsed, folders[i]);
            if (webhooks[i] is { } hook)
            {
                o.WriteLine($"Webhook: {hook.Sent:N0} alerts delivered, {hook.Failed:N0} failed, {hook.Dropped:N0} dropped.");
            }
        }
        if (IsEmpty(lanes[0]))
        {
            o.WriteLine($"No events in '{file}': nothing was {(MonitorOnly ? "monitored" : "scored")}, so no {(MonitorOnly ? "" : "model or ")}report was written; summary.json records the empty run.");
        }
        else if (compare)
        {
            o.WriteLine($"Comparison of {configs.Count} configurations in {Path.GetFullPath(Path.Combine(outDir, ReportWriter.FileName))}");
        }
        return ExitCode.Ok;
    }

    /// <summary>
    /// The end-of-run files, each whole through a temporary name: every model and report
    /// first, then the comparison, then each summary.json last, so a summary on disk means
    /// every other file of its run is complete. A run with nothing to score gets only its
    /// summary: a model that learned nothing and charts without points would mislead.
    /// </summary>
    private async Task WriteEndFilesAsync(string file, string outDir, IReadOnlyList<string> names, string[] folders,
        IReadOnlyList<ReplayLane> lanes, IReadOnlyList<ReportRecorder> recorders, FeatureNames featureNames, WebhookAlertSink?[] webhooks, TimeSpan elapsed,
        IReadOnlyList<ChallengerPromotion>? promotions)
    {
        bool empty = IsEmpty(lanes[0]);
        for (int i = 0; i < lanes.Count && !empty; i++)
        {
            var engine = lanes[i].Engine;
            var folder = folders[i];
            var recorder = recorders[i];
            recorder.Finish();
            // The model file and the report are independent: the engine is captured and written
            // on one core while the report renders on the other (the engine is only read from
            // here on). The capture and the names were on the report's path before, and the
            // model side is the longer of the two (tests/Driftline.Benchmarks README).
            var modelWrite = Task.CompletedTask;
            if (!MonitorOnly)
            {
                string modelPath = Path.Combine(folder, ModelFile);
                modelWrite = Task.Run(() =>
                {
                    var snapshot = engine.Snapshot();
                    snapshot.FeatureNames = featureNames.Entries.ToDictionary(e => e.Key.ToString(CultureInfo.InvariantCulture), e => e.Value);
                    OutputFile.Write(modelPath, stream => SnapshotCodec.Write(snapshot, stream), context.CreateOutput);
                }, CancellationToken.None);
            }
            try
            {
                recorder.Data.DeadLetters = lanes[i].DeadLetters;
                recorder.Data.Elapsed = elapsed;
                ReportWriter.WriteSingle(Path.Combine(folder, ReportWriter.FileName), file, recorder.Data, context.CreateOutput);
                PhaseMarks.Mark("report");
            }
            finally
            {
                await modelWrite.ConfigureAwait(false);
                PhaseMarks.Mark("model");
            }
        }
        if (folders.Length > 1 && !empty)
        {
            ReportWriter.WriteComparison(Path.Combine(outDir, ReportWriter.FileName), file, recorders.Select(r => r.Data).ToList(), context.CreateOutput);
        }
        for (int i = 0; i < lanes.Count; i++)
        {
            SummaryWriter.Write(Path.Combine(folders[i], SummaryFile), lanes[i].Engine, lanes[i].DeadLetters, elapsed, webhooks[i], context.CreateOutput, recorders[i].Data.Challenger,
                i == 0 ? promotions : null);
        }
    }

    // Every lane reads the same records, so the first one tells.
    private bool IsEmpty(ReplayLane lane) =>
        (MonitorOnly ? lane.Engine.Counters.Probabilities : lane.Engine.Counters.Events) == 0;

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
        var total = engine.Measures(total: true);
        var prior = engine.PriorMeasures(total: true);
        string what = MonitorOnly ? $"{c.Probabilities:N0} probabilities" : $"{c.Events:N0} events scored";
        o.WriteLine($"{(MonitorOnly ? "Monitored" : "Replayed")} {pipeline.Lines:N0} lines in {elapsed.TotalSeconds:0.00} s: {what}, {c.Labels:N0} labels ({c.LateLabels:N0} late), {engine.Pending.Expired:N0} expired, {lane.DeadLetters:N0} dead letters.");
        if (total.IsReady)
        {
            o.WriteLine(engine.ClassNames is null
                ? $"Log-loss {total.LogLoss:0.0000} against {prior.LogLoss:0.0000} for the class prior; Brier {total.Brier:0.0000}; ECE {total.Ece:0.0000}."
                : $"Log-loss {total.LogLoss:0.0000} against {prior.LogLoss:0.0000} for the class prior; Brier (summed over classes) {total.Brier:0.0000}; top-label ECE {total.Ece:0.0000}; class-wise ECE {engine.ClassWiseEce(total: true):0.0000}; accuracy {total.MeanY:0.0000}.");
            foreach (var k in engine.ClassMeasuresOf(total: true))
            {
                o.WriteLine($"  class '{k.Name}': predicted {k.MeanP:0.0000}, observed {k.ObservedRate:0.0000}, ECE {k.Ece:0.0000}.");
            }
        }
        foreach (var alert in outputs.AlertsWritten)
        {
            o.WriteLine($"Alert {alert.Rule} at label {alert.Labels:N0} (event {alert.EventId}): {RecordJson.Describe(alert)}");
        }
        if (outputs.AlertsWritten.Count == 0)
        {
            o.WriteLine("No alerts.");
        }
        string ends = IsEmpty(lane) ? SummaryFile : MonitorOnly ? $"{SummaryFile}, {ReportWriter.FileName}" : $"{SummaryFile}, {ModelFile}, {ReportWriter.FileName}";
        o.WriteLine(MonitorOnly
            ? $"Outputs in {Path.GetFullPath(folder)}: alerts.jsonl, dead-letters.jsonl, metrics.csv, {ends}"
            : $"Outputs in {Path.GetFullPath(folder)}: predictions.jsonl, alerts.jsonl, dead-letters.jsonl, metrics.csv, {ends}");
    }
}
