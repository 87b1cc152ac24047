using System.CommandLine;
using Driftline.Configuration;
using Driftline.Core.Challengers;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Kafka.Options;
using Driftline.Kafka.Worker;
using Driftline.Output;
using Driftline.Pipeline;
using Serilog;
using Serilog.Formatting.Compact;

namespace Driftline.Cli;

/// <summary>
/// <c>driftline run</c>: the live worker. With a broker configured it joins the consumer
/// group and scores the events topic into the predictions topic; without one it reads events
/// on standard input and writes predictions to standard output, alerts to <c>--alerts-file</c>
/// or as <c>alert: </c> lines on standard error beside the log. With Kafka, SIGINT and SIGTERM
/// stop it cleanly (checkpoint, commit, leave; exit 0); reading standard input, they end with a
/// count line and exit 130 or 143, as shells report a process a signal ended.
/// </summary>
internal sealed class RunCommand(CommandContext context)
{
    /// <summary>The command-line definition.</summary>
    public Command Build()
    {
        var bootstrap = new Option<string?>("--bootstrap") { Description = "Kafka brokers, host:port[,host:port]; without it events are read from standard input" };
        var group = new Option<string?>("--group") { Description = "Consumer group the workers share (default driftline)" };
        var events = new Option<string?>("--events-topic") { Description = "Topic of events to score (default events)" };
        var labels = new Option<string?>("--labels-topic") { Description = "Separate topic of late labels, co-partitioned with the events topic (default: labels come on the events topic)" };
        var predictions = new Option<string?>("--predictions-topic") { Description = "Topic the probabilities go to (default predictions)" };
        var alerts = new Option<string?>("--alerts-topic") { Description = "Topic alerts go to (default alerts)" };
        var deadLetters = new Option<string?>("--dead-letter-topic") { Description = "Topic rejected records go to (default dead-letters)" };
        var checkpoints = new Option<string?>("--checkpoint-dir") { Description = "Folder of the per-partition checkpoints (default checkpoints)" };
        var config = new Option<string?>("--config") { Description = "JSON configuration file; the Kafka section holds the topics and client settings" };
        var alertsFile = new Option<string?>("--alerts-file") { Description = "Without Kafka: write alerts as JSON lines to this file (replaced at start) instead of as 'alert: ' lines on standard error" };
        var challenger = new Option<string[]>("--challenger")
        {
            Description = "A configuration scored and trained in the shadow on the same events and judged against the champion (--config) by a sequential test on their per-label log-loss; its probabilities are published only to Kafka:ChallengerTopic; repeat for several",
            Arity = ArgumentArity.ZeroOrMore,
            HelpName = "FILE",
        };
        var command = new Command("run", "Run the live worker: score every event, learn from labels, publish predictions and alerts")
        {
            bootstrap, group, events, labels, predictions, alerts, deadLetters, checkpoints, config, alertsFile, challenger,
        };
        command.SetAction((result, token) =>
        {
            var overrides = new Dictionary<string, string?>(StringComparer.Ordinal)
            {
                ["Bootstrap"] = result.GetValue(bootstrap),
                ["Group"] = result.GetValue(group),
                ["EventsTopic"] = result.GetValue(events),
                ["LabelsTopic"] = result.GetValue(labels),
                ["PredictionsTopic"] = result.GetValue(predictions),
                ["AlertsTopic"] = result.GetValue(alerts),
                ["DeadLetterTopic"] = result.GetValue(deadLetters),
                ["CheckpointDir"] = result.GetValue(checkpoints),
            };
            return RunAsync(result.GetValue(config), overrides, token, result.GetValue(alertsFile), result.GetValue(challenger));
        });
        return command;
    }

    /// <summary>The command-line flag of each <see cref="KafkaOptions"/> option <see cref="Build"/> offers.</summary>
    private static readonly Dictionary<string, string> Flags = new(StringComparer.Ordinal)
    {
        [nameof(KafkaOptions.Bootstrap)] = "--bootstrap",
        [nameof(KafkaOptions.Group)] = "--group",
        [nameof(KafkaOptions.EventsTopic)] = "--events-topic",
        [nameof(KafkaOptions.LabelsTopic)] = "--labels-topic",
        [nameof(KafkaOptions.PredictionsTopic)] = "--predictions-topic",
        [nameof(KafkaOptions.AlertsTopic)] = "--alerts-topic",
        [nameof(KafkaOptions.DeadLetterTopic)] = "--dead-letter-topic",
        [nameof(KafkaOptions.CheckpointDir)] = "--checkpoint-dir",
    };

    /// <summary>The prefix of an alert line on standard error, so a reader tells alerts from log lines (<c>grep '^alert: '</c>).</summary>
    public const string AlertPrefix = "alert: ";

    /// <summary>
    /// Runs the worker; returns the exit code. <paramref name="overrides"/> are Kafka options from
    /// the command line (null = not given); <paramref name="alertsFile"/> is where alerts go without Kafka (null = standard error).
    /// </summary>
    public async Task<int> RunAsync(string? configPath, IReadOnlyDictionary<string, string?> overrides, CancellationToken cancellation, string? alertsFile = null,
        IReadOnlyList<string>? challengerPaths = null)
    {
        var settings = RunSettings.Load(configPath, context.Environment, overrides, out var errors);
        if (settings is null)
        {
            return ConfigErrors.Report(context.Error, configPath, errors);
        }
        var (core, kafka, worker) = settings;
        var challengers = new List<ChallengerConfig>();
        foreach (var path in challengerPaths ?? [])
        {
            var options = ConfigLoader.Load(path, context.Environment, out var challengerErrors);
            if (options is null)
            {
                return ConfigErrors.Report(context.Error, path, challengerErrors);
            }
            string name = Path.GetFileNameWithoutExtension(path);
            if (challengers.Any(c => string.Equals(c.Name, name, StringComparison.Ordinal)))
            {
                await context.Error.WriteLineAsync($"driftline: two challengers are named '{name}'; the checkpoint keeps each challenger's state under its file name, so rename one of the files").ConfigureAwait(false);
                return ExitCode.Usage;
            }
            // One parse serves the champion and its challengers, as in replay.
            if (!string.Equals(options.Monitor.SegmentBy, core.Monitor.SegmentBy, StringComparison.Ordinal))
            {
                return ConfigErrors.Report(context.Error, path,
                    [new("Monitor:SegmentBy", $"'{options.Monitor.SegmentBy ?? "(none)"}' here but '{core.Monitor.SegmentBy ?? "(none)"}' for the champion; a challenger reads each record through the champion's parse", "Give the challenger the champion's Monitor:SegmentBy")]);
            }
            static string ClassesOf(DriftlineOptions o) => o.Model.Classes is { } c ? string.Join(", ", c) : "(binary)";
            if (ClassesOf(options) != ClassesOf(core))
            {
                return ConfigErrors.Report(context.Error, path,
                    [new("Model:Classes", $"'{ClassesOf(options)}' here but '{ClassesOf(core)}' for the champion; a challenger reads each record through the champion's parse", "Give the challenger the champion's Model:Classes, in the same order")]);
            }
            challengers.Add(new ChallengerConfig(name, options));
        }
        if (!kafka.UsesKafka)
        {
            // Without a broker these would be ignored and the worker would read standard input instead.
            var given = overrides.Where(kv => kv.Value is not null && kv.Key != nameof(KafkaOptions.Bootstrap)).Select(kv => Flags[kv.Key]).ToList();
            if (given.Count > 0)
            {
                await context.Error.WriteLineAsync($"driftline: {string.Join(", ", given)} {(given.Count == 1 ? "needs" : "need")} a Kafka broker: give --bootstrap HOST:PORT (or Kafka:Bootstrap in the configuration), or leave {(given.Count == 1 ? "it" : "them")} out to read events on standard input").ConfigureAwait(false);
                return ExitCode.Usage;
            }
            if (settings.KafkaSectionWithoutBootstrap)
            {
                return ConfigErrors.Report(context.Error, configPath,
                    [new("Kafka:Bootstrap", "is not set, so the Kafka section would be ignored and events read from standard input", "Set Kafka:Bootstrap (or --bootstrap, or DRIFTLINE_Kafka__Bootstrap), or set it to \"\" to read standard input on purpose")]);
            }
        }
        if (kafka.UsesKafka && alertsFile is not null)
        {
            await context.Error.WriteLineAsync("driftline: --alerts-file is for reading standard input; with Kafka, alerts go to the alerts topic (--alerts-topic)").ConfigureAwait(false);
            return ExitCode.Usage;
        }
        if (worker.LogFormat == "json")
        {
            Log.Logger = new LoggerConfiguration().WriteTo.Console(new CompactJsonFormatter(), standardErrorFromLevel: Serilog.Events.LogEventLevel.Verbose).CreateLogger();
        }

        // SIGINT and SIGTERM (docker stop, Kubernetes) are the host's (StopSignals): both cancel the token.
        return kafka.UsesKafka
            ? await RunKafkaAsync(kafka, core, worker, challengers, cancellation).ConfigureAwait(false)
            : await RunStdioAsync(core, challengers, alertsFile, cancellation).ConfigureAwait(false);
    }

    private async Task<int> RunKafkaAsync(KafkaOptions kafka, DriftlineOptions core, WorkerOptions host, IReadOnlyList<ChallengerConfig> challengers, CancellationToken stop)
    {
        if (core.Webhook.Address() is { Scheme: "http" } plain)
        {
            // Once per start, not per alert: the operator needs to know, not to be flooded.
            Log.Warning("Webhook:Url {Host} is plain http://: alerts, and any token in the address, cross the network unencrypted; use https://", plain.Authority);
        }
        // Alerts also go to the webhook when one is configured; its queue never blocks the partitions.
        await using var webhook = core.Webhook.Address() is not null ? new WebhookAlertSink(core.Webhook) : null;
        var worker = new KafkaWorker(kafka, core)
        {
            AlertObserver = webhook is null ? null : a => webhook.Enqueue(a),
            ExitAfterBrokerDown = host.ExitAfterBrokerDown,
            Challengers = challengers,
        };
        MetricsEndpoint? endpoint = null;
        if (host.MetricsPort > 0)
        {
            try
            {
                endpoint = MetricsEndpoint.Start(host, worker);
            }
            catch (MetricsEndpointException ex)
            {
                Log.Debug(ex, "Metrics endpoint not started");
                await context.Error.WriteLineAsync($"driftline: {ex.Message}").ConfigureAwait(false);
                return ExitCode.Config;
            }
        }
        using var endpointScope = endpoint;
        try
        {
            // The Kafka loop blocks in Consume, so it gets a thread of its own, not a pool thread.
            await Task.Factory.StartNew(() => worker.Run(stop), CancellationToken.None, TaskCreationOptions.LongRunning, TaskScheduler.Default).ConfigureAwait(false);
            return ExitCode.Ok;
        }
        catch (KafkaWorkerException ex)
        {
            // The operator gets one line; the cause chain is there for debug logging.
            Log.Debug(ex, "Worker stopped: {Reason}", ex.Message);
            await context.Error.WriteLineAsync($"driftline: {ex.Message}").ConfigureAwait(false);
            return ex.BrokerDown ? ExitCode.BrokerDown : ExitCode.Kafka;
        }
    }

    private async Task<int> RunStdioAsync(DriftlineOptions core, IReadOnlyList<ChallengerConfig> challengers, string? alertsFile, CancellationToken stop)
    {
        StreamWriter? alertsOut = null;
        if (alertsFile is not null)
        {
            try
            {
                alertsOut = new StreamWriter(OutputFile.CreateStreamed(alertsFile, context.CreateOutput), new System.Text.UTF8Encoding(false));
            }
            catch (OutputException ex)
            {
                await context.Error.WriteLineAsync(ex.Line).ConfigureAwait(false);
                return ExitCode.Input;
            }
        }
        await using var alertsScope = alertsOut;
        Log.Information("No Kafka bootstrap configured: reading events on standard input, writing predictions to standard output, alerts to {Alerts}",
            alertsFile ?? "standard error (lines starting 'alert: ')");
        using var input = context.StandardInput();
        // Challengers are further lanes of the same pipeline, as in replay: only the champion's
        // lane is written; each challenger's decision is a line among the champion's alerts.
        var lanes = new List<ReplayLane> { new(core) };
        var panel = new ChallengerPanel(lanes[0].Engine, core.Challengers, snapshot => lanes[0].Engine = ScoringEngine.Restore(snapshot, lanes[0].Output))
        {
            Promoted = (p, _) => Log.Warning("Challenger {Challenger} promoted to champion at label {Labels} (Challengers:AutoPromote)", p.Challenger, p.Labels),
        };
        foreach (var challenger in challengers)
        {
            var lane = new ReplayLane(challenger.Options);
            panel.Add(challenger.Name, lane.Engine);
            lanes.Add(lane);
        }
        var pipeline = new ReplayPipeline(lanes) { Panel = challengers.Count > 0 ? panel : null };
        var outputs = alertsOut is null ? new StdioOutputs(context.Out, context.Error, AlertPrefix) : new StdioOutputs(context.Out, alertsOut, "");
        try
        {
            var run = pipeline.RunAsync(input, outputs.Write, stop);
            // A read of an idle terminal or pipe does not observe cancellation, so a signal
            // ends the wait here instead.
            var stopped = Task.Delay(Timeout.Infinite, stop);
            if (await Task.WhenAny(run, stopped).ConfigureAwait(false) == stopped)
            {
                // What was read and scored is written unless the read blocks (an idle pipe): a moment for the writer stage.
                await Task.WhenAny(run, Task.Delay(TimeSpan.FromSeconds(1), CancellationToken.None)).ConfigureAwait(false);
                return await StoppedAsync(pipeline, outputs).ConfigureAwait(false);
            }
            await run.ConfigureAwait(false);
            if (stop.IsCancellationRequested)
            {
                // The pipeline ends a cancelled read as an end of input: still a stop by signal.
                return await StoppedAsync(pipeline, outputs).ConfigureAwait(false);
            }
        }
        catch (OperationCanceledException) when (stop.IsCancellationRequested)
        {
            return await StoppedAsync(pipeline, outputs).ConfigureAwait(false);
        }
        catch (OutputException ex)
        {
            await context.Error.WriteLineAsync(ex.Line).ConfigureAwait(false);
            return ExitCode.Input;
        }
        catch (IOException ex)
        {
            await context.Error.WriteLineAsync($"driftline: reading standard input failed: {ex.Message}").ConfigureAwait(false);
            return ExitCode.Input;
        }
        var c = pipeline.Engine.Counters;
        Log.Information("Input ended: {Events} events scored, {Labels} labels ({Late} late), {DeadLetters} dead letters, {Alerts} alerts",
            c.Events, c.Labels, c.LateLabels, pipeline.DeadLetters, outputs.Alerts);
        return ExitCode.Ok;
    }

    /// <summary>The final count of a run a signal stopped, on standard error, and the signal's exit code (130 SIGINT, 143 SIGTERM).</summary>
    private async Task<int> StoppedAsync(ReplayPipeline pipeline, StdioOutputs outputs)
    {
        int code = context.StoppedExitCode();
        string signal = code == ExitCode.Terminated ? "SIGTERM" : "SIGINT";
        await context.Error.WriteLineAsync(string.Create(System.Globalization.CultureInfo.InvariantCulture,
            $"driftline: stopped by {signal}: {outputs.Predictions:N0} predictions written, {pipeline.Engine.Counters.Labels:N0} labels, {pipeline.DeadLetters:N0} dead letters, {outputs.Alerts:N0} alerts")).ConfigureAwait(false);
        await context.Error.FlushAsync().ConfigureAwait(false);
        return code;
    }
}
