using System.Text.Json;
using Driftline.Core.Scoring;

namespace Driftline.Output;

/// <summary>
/// Writes <c>summary.json</c>: the run's figures in one small object. It is the last file a
/// finished run writes, so its presence means the run finished (see <see cref="OutputFile"/>).
/// </summary>
internal static class SummaryWriter
{
    /// <summary>
    /// Writes the summary of <paramref name="engine"/>'s run to <paramref name="path"/>, with
    /// <c>webhook_sent</c>, <c>webhook_failed</c> and <c>webhook_dropped</c> when a
    /// <paramref name="webhook"/> was in use (read them after it has drained). The file is
    /// written whole through a temporary name, opened with <paramref name="create"/>.
    /// </summary>
    /// <exception cref="OutputException">The file cannot be written.</exception>
    public static void Write(string path, ScoringEngine engine, long deadLetters, TimeSpan elapsed, WebhookAlertSink? webhook = null, Func<string, Stream>? create = null,
        Core.Challengers.ChallengerJudge? challenger = null, IReadOnlyList<Core.Challengers.ChallengerPromotion>? promotions = null) =>
        OutputFile.Write(path, file => Write(file, engine, deadLetters, elapsed, webhook, challenger, promotions), create);

    private static void Write(Stream file, ScoringEngine engine, long deadLetters, TimeSpan elapsed, WebhookAlertSink? webhook, Core.Challengers.ChallengerJudge? challenger,
        IReadOnlyList<Core.Challengers.ChallengerPromotion>? promotions)
    {
        using var w = new Utf8JsonWriter(file, new JsonWriterOptions { Indented = true });
        var c = engine.Counters;
        var total = engine.Measures(total: true);
        var prior = engine.PriorMeasures(total: true);
        w.WriteStartObject();
        w.WriteNumber("events", c.Events);
        w.WriteNumber("probabilities", c.Probabilities);
        w.WriteNumber("labels", c.Labels);
        w.WriteNumber("inline_labels", c.InlineLabels);
        w.WriteNumber("late_labels", c.LateLabels);
        w.WriteNumber("expired_labels", engine.Pending.Expired);
        w.WriteNumber("waiting_labels", engine.Pending.Waiting);
        w.WriteNumber("unknown_labels", c.UnknownLabels);
        w.WriteNumber("duplicate_labels", c.DuplicateLabels);
        w.WriteNumber("dead_letters", deadLetters);
        w.WriteNumber("clamped_times", c.ClampedTimes);
        Number(w, "log_loss", total.LogLoss);
        Number(w, "prior_log_loss", prior.LogLoss);
        Number(w, "log_loss_skill", prior.LogLoss > 0 ? 1 - total.LogLoss / prior.LogLoss : double.NaN);
        Number(w, "brier", total.Brier);
        Number(w, "prior_brier", prior.Brier);
        Number(w, "ece", total.Ece);
        Number(w, "calibration_in_the_large", total.CalibrationInTheLarge);
        if (engine.ClassNames is not null)
        {
            // Multiclass: brier is summed over classes, ece is the top-label ECE, and
            // calibration_in_the_large is mean confidence minus accuracy (README, "More than two classes").
            Number(w, "accuracy", total.MeanY);
            Number(w, "top_label_ece", total.Ece);
            Number(w, "classwise_ece", engine.ClassWiseEce(total: true));
            w.WriteStartArray("classes");
            foreach (var k in engine.ClassMeasuresOf(total: true))
            {
                w.WriteStartObject();
                w.WriteString("class", k.Name);
                Number(w, "mean_p", k.MeanP);
                Number(w, "observed_rate", k.ObservedRate);
                Number(w, "ece", k.Ece);
                Number(w, "prior_mean_p", k.PriorMeanP);
                w.WriteEndObject();
            }
            w.WriteEndArray();
        }
        if (engine.ServedMeasures(total: true) is { } served)
        {
            // Recalibration on: the figures above are the raw model's (what the alerts watch);
            // these are of the probabilities served, with each model's fitted correction
            // (multiclass: as the raw block, Brier summed over classes, ECE of the top label).
            w.WriteStartObject("served");
            Number(w, "log_loss", served.LogLoss);
            Number(w, "brier", served.Brier);
            Number(w, "ece", served.Ece);
            Number(w, "calibration_in_the_large", served.CalibrationInTheLarge);
            w.WriteStartArray("recalibration");
            foreach (var m in engine.Models.Where(m => m.Recalibration is not null))
            {
                var r = m.Recalibration!;
                w.WriteStartObject();
                w.WriteString("key", m.Key);
                if (engine.ClassNames is { } names)
                {
                    // Vector scaling: one pair per class.
                    w.WriteStartArray("classes");
                    for (int k = 0; k < r.Parameters.Count; k++)
                    {
                        w.WriteStartObject();
                        w.WriteString("class", names[k]);
                        Number(w, "intercept", r.Parameters[k].Intercept);
                        Number(w, "slope", r.Parameters[k].Slope);
                        w.WriteEndObject();
                    }
                    w.WriteEndArray();
                }
                else
                {
                    Number(w, "intercept", r.Parameters[0].Intercept);
                    Number(w, "slope", r.Parameters[0].Slope);
                }
                w.WriteNumber("labels", r.Labels);
                w.WriteBoolean("serving", r.Serving);
                w.WriteEndObject();
            }
            w.WriteEndArray();
            w.WriteEndObject();
        }
        if (challenger is not null)
        {
            // This configuration ran as a challenger: its paired test against the champion.
            w.WriteStartObject("against_champion");
            w.WriteNumber("paired_labels", challenger.Paired);
            w.WriteNumber("unpaired_labels", challenger.Unpaired);
            Number(w, "champion_log_loss", challenger.ChampionLogLoss);
            Number(w, "log_loss", challenger.ChallengerLogLoss);
            Number(w, "evidence", challenger.Evidence);
            Number(w, "threshold", challenger.Threshold);
            w.WriteStartArray("declared_better_at");
            foreach (long at in challenger.DecidedAt)
            {
                w.WriteNumberValue(at);
            }
            w.WriteEndArray();
            w.WriteEndObject();
        }
        if (promotions is { Count: > 0 })
        {
            // Challengers:AutoPromote: who replaced the champion, when. The figures above are
            // then those of the engine serving at the end, which carries the promoted
            // challenger's whole history.
            w.WriteStartArray("promotions");
            foreach (var p in promotions)
            {
                w.WriteStartObject();
                w.WriteString("challenger", p.Challenger);
                w.WriteNumber("at_label", p.Labels);
                w.WriteString("event_id", p.EventId);
                w.WriteEndObject();
            }
            w.WriteEndArray();
        }
        w.WriteNumber("alerts_raised", c.AlertsRaised);
        w.WriteNumber("incidents", c.Incidents);
        w.WriteNumber("alerts_cleared", c.AlertsCleared);
        w.WriteStartArray("alerts_open");
        foreach (var rule in engine.Rules.Where(r => r.Raised))
        {
            w.WriteStringValue(rule.Options.Name);
        }
        w.WriteEndArray();
        if (webhook is not null)
        {
            w.WriteNumber("webhook_sent", webhook.Sent);
            w.WriteNumber("webhook_failed", webhook.Failed);
            w.WriteNumber("webhook_dropped", webhook.Dropped);
        }
        w.WriteNumber("models", engine.Models.Count);
        w.WriteNumber("refused_updates", engine.Models.Sum(m => m.Learner.RefusedUpdates));
        w.WriteNumber("seconds", Math.Round(elapsed.TotalSeconds, 3));
        w.WriteEndObject();
    }

    private static void Number(Utf8JsonWriter w, string name, double value)
    {
        if (double.IsFinite(value))
        {
            w.WriteNumber(name, value);
        }
        else
        {
            w.WriteNull(name);
        }
    }
}
