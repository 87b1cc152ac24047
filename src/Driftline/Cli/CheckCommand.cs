using System.CommandLine;
using Driftline.Configuration;
using Driftline.Core.Events;
using Driftline.Core.Options;

namespace Driftline.Cli;

/// <summary><c>driftline check CONFIG</c>: validates a configuration and says what the worker would do with it.</summary>
internal sealed class CheckCommand(CommandContext context)
{
    /// <summary>The command-line definition.</summary>
    public Command Build()
    {
        var config = new Argument<string?>("CONFIG") { Description = "JSON configuration file", Arity = ArgumentArity.ZeroOrOne, HelpName = "FILE" };
        var list = new Option<bool>("--list") { Description = "Print every option with its built-in value and meaning, then stop" };
        var command = new Command("check", "Validate a configuration (every section, the worker's too) and print what would run") { config, list };
        command.SetAction(result =>
        {
            if (result.GetValue(list))
            {
                OptionList.Write(context.Out);
                return ExitCode.Ok;
            }
            if (result.GetValue(config) is not { } path)
            {
                context.Error.WriteLine("driftline: check needs a configuration file (driftline check FILE), or --list for every option");
                return ExitCode.Usage;
            }
            return Run(path);
        });
        return command;
    }

    /// <summary>Validates <paramref name="path"/> as <c>run</c> would (the Kafka and Worker sections too); returns the exit code.</summary>
    public int Run(string path)
    {
        if (Directory.Exists(path))
        {
            // The same exit code as a configuration file that does not exist.
            context.Error.WriteLine($"driftline: '{path}' is a folder; give the configuration file (JSON), such as config/default.json");
            return ExitCode.Config;
        }
        var settings = RunSettings.Load(path, context.Environment, new Dictionary<string, string?>(), out var errors);
        if (settings is null)
        {
            return ConfigErrors.Report(context.Error, path, errors);
        }
        Describe(settings.Core, context.Out);
        var k = settings.Kafka;
        context.Out.WriteLine(k.UsesKafka
            ? $"Worker (run): group {k.Group} on {k.Bootstrap}, events from {k.EventsTopic}{(k.LabelsTopic is null ? "" : $", labels from {k.LabelsTopic}")}, predictions to {k.PredictionsTopic}."
            : "Worker (run): no Kafka bootstrap, so events on standard input and predictions on standard output.");
        context.Out.WriteLine($"{path}: valid.");
        return ExitCode.Ok;
    }

    /// <summary>Writes a plain description of what <paramref name="options"/> configures.</summary>
    public static void Describe(DriftlineOptions options, TextWriter o)
    {
        var m = options.Model;
        o.WriteLine($"Model: {(m.Learner == LearnerKind.Ftrl ? "FTRL-Proximal" : "AdaGrad")} logistic regression, 2^{m.HashBits} = {1 << m.HashBits:N0} hashed weights per key (at most {m.MaxModels} keys).");
        if (m.Classes is { } classes)
        {
            o.WriteLine($"  multiclass (softmax) over {classes.Count} classes, fitted jointly: {string.Join(", ", classes.Select(c => $"'{c}'"))}; calibration rules run per class against the rest.");
        }
        o.WriteLine($"  learning rate {m.LearningRate}, rate smoothing {m.RateSmoothing}, L1 {m.L1}, L2 {m.L2}.");
        o.WriteLine(m.HalfLifeLabels > 0
            ? $"  forgetting: evidence counts half after {m.HalfLifeLabels:N0} labels."
            : "  forgetting: off (the model's rates shrink as it learns).");
        o.WriteLine(m.Scaling == ScalingMode.Online
            ? $"  numbers standardised online (running mean and variance), clipped at ±{m.StandardisedLimit} sd."
            : "  numbers used as given.");
        foreach (var (name, scale) in m.FixedScales)
        {
            o.WriteLine($"  {name} divided by {scale}.");
        }
        o.WriteLine(m.Interactions.Count == 0 ? "  no interactions." : $"  interactions: {string.Join(", ", m.Interactions)}.");
        o.WriteLine($"Late labels: up to {options.Labels.MaxPending:N0} predictions wait, each for at most {options.Labels.MaxAge} of event time; one record moves the clock at most {options.Labels.MaxClockSkew} ahead.");
        o.WriteLine($"Input: lines and Kafka messages up to {options.Input.MaxLineBytes:N0} bytes, ids, keys and feature names and values up to {options.Input.MaxTextBytes:N0} bytes; longer ones are dead letters.");
        o.WriteLine($"Monitor: rolling window of {options.Monitor.Window:N0} labels, {options.Monitor.Bins} reliability bins, a metrics row every {options.Monitor.MetricsEvery:N0} labels.");
        var recal = options.Recalibration;
        // Multiclass: the same layer per class (vector scaling), renormalised by the softmax.
        string form = options.Model.IsMulticlass ? "softmax(b_k·ln p_k + a_k) per class" : "σ(a + b·logit p)";
        o.WriteLine(recal.Mode switch
        {
            Core.Recalibration.RecalibrationMode.Always => $"Recalibration: every prediction is served as {form}, fitted online (half-life {recal.HalfLife:N0} labels, b within {recal.MinSlope}–{recal.MaxSlope}, served from {recal.MinLabels:N0} labels on); p_raw keeps the model's own.",
            Core.Recalibration.RecalibrationMode.OnAlert => $"Recalibration: served as {form} from a calibration rule's raise until the rules have been clear for {recal.ClearLabels:N0} labels (half-life {recal.HalfLife:N0} labels, b within {recal.MinSlope}–{recal.MaxSlope}); p_raw keeps the model's own.",
            _ => "Recalibration: off (predictions carry the model's own p).",
        });
        o.WriteLine($"As champion: a challenger (replay or run --challenger) is declared better at error rate {options.Challengers.ErrorRate}, per-label log-loss differences clipped at {options.Challengers.LossClip} nats{(options.Challengers.AutoPromote ? ", and then replaces the champion (Challengers:AutoPromote)" : "; the champion stays (Challengers:AutoPromote off)")}.");
        // Only scheme, host and port: the path and query of a webhook address often hold a secret,
        // and this text goes into report.html.
        var w = options.Webhook;
        o.WriteLine(w.Address() is { } hook
            ? $"Webhook: each alert POSTed to {hook.Scheme}://{hook.Authority}/…, up to {w.MaxAttempts} attempts of at most {w.Timeout.TotalSeconds:0.###} s each, backing off from {w.FirstRetryDelay.TotalSeconds:0.###} s to {w.MaxRetryDelay.TotalSeconds:0.###} s; at most {w.QueueLimit:N0} alerts wait, {w.ShutdownGrace.TotalSeconds:0.###} s to drain at shutdown."
            : "Webhook: off.");
        if (w.Address() is { Scheme: "http" })
        {
            o.WriteLine("  warning: plain http://, so alerts and any token in the address cross the network unencrypted; use https://.");
        }
        var rules = options.EffectiveAlerts;
        o.WriteLine(rules.Count == 0 ? "Alerts: none." : $"Alerts{(options.Alerts is null ? " (defaults)" : "")}:");
        foreach (var r in rules)
        {
            string severity = r.Severity == Core.Alerts.AlertSeverity.Critical ? "critical" : "warning";
            if (r.Metric == Core.Alerts.AlertMetric.CalibrationDrift)
            {
                o.WriteLine($"  {r.Name} ({severity}): sequential calibration test, at most one false alarm per {r.LabelsPerFalseAlarm:N0} labels on a calibrated stream; starts after {r.MinLabels:N0} labels.");
                continue;
            }
            if (r.IsDetector)
            {
                o.WriteLine($"  {r.Name} ({severity}): {RecordJson.MetricName(r.Metric)} change detector on the per-label log-loss, cleared {r.Window:N0} labels after its last signal; starts after {r.MinLabels:N0} labels.");
                continue;
            }
            string side = r.Direction == Core.Alerts.AlertDirection.Above ? "rises to" : "falls to";
            string relative = r.RelativeTo == Core.Alerts.AlertBaseline.None ? "" : $" (relative to the {(r.RelativeTo == Core.Alerts.AlertBaseline.Prior ? "class prior" : "reference period")})";
            string cooldown = r.CooldownLabels > 0 ? $", then waits {r.CooldownLabels:N0} labels before raising again" : "";
            string over = r.WindowTime is { } span ? $"the last {span} of event time (at most {r.Window:N0} labels)" : $"the last {r.Window:N0} labels";
            o.WriteLine($"  {r.Name} ({severity}): raise when {RecordJson.MetricName(r.Metric)}{relative} over {over} {side} {r.Raise}, clear once it has stayed at {r.Clear} or better for {r.EffectiveClearHold:N0} labels{cooldown}; needs {r.MinLabels:N0} labels first.");
        }
    }
}
