using System.Globalization;
using System.Text.Json;
using Driftline.Core.Alerts;
using Driftline.Core.Scoring;

namespace Driftline.Core.Events;

/// <summary>
/// The JSON shapes Driftline emits (the output half of the data contracts): predictions and
/// alerts. Writes into a caller's <see cref="Utf8JsonWriter"/>; no I/O here.
/// </summary>
internal static class RecordJson
{
    /// <summary>Writes <c>{"id","key","p","model_version","time"}</c>; <c>time</c> only when the event had one.</summary>
    public static void WritePrediction(Utf8JsonWriter w, in Prediction p)
    {
        w.WriteStartObject();
        w.WriteString("id"u8, p.Id);
        w.WriteString("key"u8, p.Key);
        if (p.Classes is { } classes && p.ClassNames is { } names)
        {
            // Multiclass: an object over the classes in the configured order.
            w.WriteStartObject("p"u8);
            for (int k = 0; k < classes.Length; k++)
            {
                w.WriteNumber(names[k], classes[k]);
            }
            w.WriteEndObject();
            if (p.RawClasses is { } raw)
            {
                // Recalibration on: p is served, p_raw the model's own, over the same classes.
                w.WriteStartObject("p_raw"u8);
                for (int k = 0; k < raw.Length; k++)
                {
                    w.WriteNumber(names[k], raw[k]);
                }
                w.WriteEndObject();
            }
        }
        else
        {
            w.WriteNumber("p"u8, p.P);
            if (!double.IsNaN(p.Raw))
            {
                // Recalibration on: p is served, p_raw the model's own.
                w.WriteNumber("p_raw"u8, p.Raw);
            }
        }
        w.WriteNumber("model_version"u8, p.ModelVersion);
        if (p.TimeTicks != ParsedRecord.NoTime)
        {
            w.WriteString("time"u8, new DateTime(p.TimeTicks, DateTimeKind.Utc));
        }
        w.WriteEndObject();
    }

    /// <summary>
    /// Writes an alert: <c>rule</c>, <c>state</c> (raised/cleared), <c>metric</c>, <c>value</c>,
    /// <c>threshold</c>, <c>window</c>, <c>event_id</c>, <c>time</c> (null when the label had none),
    /// <c>labels</c> and a one-sentence <c>message</c>.
    /// </summary>
    public static void WriteAlert(Utf8JsonWriter w, AlertTransition a)
    {
        w.WriteStartObject();
        w.WriteString("rule"u8, a.Rule);
        if (a.Class is not null)
        {
            w.WriteString("class"u8, a.Class);
        }
        w.WriteString("state"u8, a.Raised ? "raised" : "cleared");
        w.WriteString("metric"u8, MetricName(a.Metric));
        w.WriteNumber("value"u8, a.Value);
        w.WriteNumber("threshold"u8, a.Threshold);
        w.WriteNumber("window"u8, a.Window);
        w.WriteString("event_id"u8, a.EventId);
        if (a.TimeTicks != ParsedRecord.NoTime)
        {
            w.WriteString("time"u8, new DateTime(a.TimeTicks, DateTimeKind.Utc));
        }
        else
        {
            w.WriteNull("time"u8);
        }
        w.WriteNumber("labels"u8, a.Labels);
        w.WriteString("severity"u8, a.Severity == AlertSeverity.Critical ? "critical" : "warning");
        if (a.Incident > 0)
        {
            w.WriteNumber("incident"u8, a.Incident);
        }
        if (a.RelativeTo != AlertBaseline.None)
        {
            w.WriteString("relative_to"u8, a.RelativeTo == AlertBaseline.Prior ? "prior" : "reference");
        }
        if (a.Break is not null)
        {
            w.WriteString("break"u8, a.Break);
        }
        w.WriteString("message"u8, Describe(a));
        if (a.Explanation is { } e)
        {
            w.WriteStartObject("window_state"u8);
            Number(w, "mean_p"u8, e.MeanP);
            Number(w, "observed_rate"u8, e.ObservedRate);
            Number(w, "calibration_slope"u8, e.Slope);
            Number(w, "calibration_intercept"u8, e.Intercept);
            w.WriteString("direction"u8, e.Direction());
            w.WriteStartArray("worst_bins"u8);
            foreach (var b in e.WorstBins)
            {
                w.WriteStartObject();
                w.WriteNumber("lower"u8, b.Lower);
                w.WriteNumber("upper"u8, b.Upper);
                w.WriteNumber("count"u8, b.Count);
                w.WriteNumber("mean_p"u8, b.MeanP);
                w.WriteNumber("observed_rate"u8, b.MeanY);
                w.WriteEndObject();
            }
            w.WriteEndArray();
            if (e.Segments.Count > 0)
            {
                w.WriteStartArray("worst_segments"u8);
                foreach (var g in e.Segments)
                {
                    w.WriteStartObject();
                    w.WriteString("segment"u8, g.Segment);
                    w.WriteNumber("count"u8, g.Count);
                    w.WriteNumber("mean_p"u8, g.MeanP);
                    w.WriteNumber("observed_rate"u8, g.ObservedRate);
                    w.WriteNumber("z"u8, g.Z);
                    w.WriteEndObject();
                }
                w.WriteEndArray();
            }
            w.WriteEndObject();
        }
        w.WriteEndObject();
    }

    private static void Number(Utf8JsonWriter w, ReadOnlySpan<byte> name, double value)
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

    /// <summary>The snake_case name of a measure, as in outputs and configuration docs.</summary>
    public static string MetricName(AlertMetric metric) => metric switch
    {
        AlertMetric.LogLoss => "log_loss",
        AlertMetric.Brier => "brier",
        AlertMetric.Ece => "ece",
        AlertMetric.CalibrationInTheLarge => "calibration_in_the_large",
        AlertMetric.CalibrationGap => "calibration_gap",
        AlertMetric.LogLossOverPrior => "log_loss_over_prior",
        AlertMetric.CalibrationZ => "calibration_z",
        AlertMetric.CalibrationDrift => "calibration_drift",
        AlertMetric.LossShift => "loss_shift",
        AlertMetric.LossChange => "loss_change",
        AlertMetric.HosmerLemeshowP => "hosmer_lemeshow_p",
        AlertMetric.Auc => "auc",
        AlertMetric.ChallengerEvidence => "challenger_evidence",
        _ => metric.ToString(),
    };

    /// <summary>One sentence a practitioner can read without the manual.</summary>
    public static string Describe(AlertTransition a)
    {
        string measure = a.Metric switch
        {
            AlertMetric.CalibrationGap => "the gap between mean predicted probability and observed rate",
            AlertMetric.CalibrationInTheLarge => "mean predicted probability minus observed rate",
            AlertMetric.LogLossOverPrior => "the model's log-loss relative to the class-prior baseline",
            AlertMetric.Ece => "the expected calibration error",
            AlertMetric.LogLoss => "the log-loss",
            AlertMetric.Brier => "the Brier score",
            AlertMetric.CalibrationZ => "the calibration gap in standard errors",
            AlertMetric.CalibrationDrift => "the evidence of a calibration break (log-likelihood ratio)",
            AlertMetric.LossShift => "the Page–Hinkley test on the log-loss",
            AlertMetric.LossChange => "the ADWIN test on the log-loss",
            AlertMetric.HosmerLemeshowP => "the Hosmer–Lemeshow p-value",
            AlertMetric.Auc => "the AUC",
            AlertMetric.ChallengerEvidence => "the evidence that the challenger's log-loss is lower than the champion's (log of the betting wealth)",
            _ => MetricName(a.Metric),
        };
        string relative = a.RelativeTo switch
        {
            AlertBaseline.Prior => " relative to the class prior",
            AlertBaseline.Reference => " relative to its reference period",
            _ => "",
        };
        string over = a.Metric is AlertMetric.CalibrationDrift or AlertMetric.LossShift or AlertMetric.LossChange or AlertMetric.ChallengerEvidence
            ? "since the last reset"
            : $"over the last {a.Window:N0} labels";
        string brk = a.Break is null ? "" : $" Best explanation: {a.Break}.";
        string why = a.Explanation is { } e
            ? $" Predicted {e.MeanP:0.000} on average, observed {e.ObservedRate:0.000}: {e.Direction()}." + (e.WorstBins.Count > 0 ? $" Furthest off: {e.Bins()}." : "") + (e.Segments.Count > 0 ? $" Segments furthest off: {e.SegmentsInWords()}." : "")
            : "";
        string value = a.Value.ToString("0.####", CultureInfo.InvariantCulture);
        string threshold = a.Threshold.ToString("0.####", CultureInfo.InvariantCulture);
        // Compared as printed, so a reader never sees "0.06, above the raise threshold 0.06".
        string relation = value == threshold ? "at" : a.Value > a.Threshold ? "above" : "below";
        if (a.Class is not null)
        {
            // One class against the rest: the class leads the words, e.g. "class 'late' under-predicted".
            measure = $"for class '{a.Class}' against the rest, {measure}";
            if (a.Explanation is { } c && double.IsFinite(c.MeanP) && double.IsFinite(c.ObservedRate))
            {
                why = $" Class '{a.Class}' {(c.MeanP < c.ObservedRate ? "under" : "over")}-predicted: predicted {c.MeanP:0.000} on average, observed {c.ObservedRate:0.000}."
                    + (c.WorstBins.Count > 0 ? $" Furthest off: {c.Bins()}." : "");
            }
        }
        return a.Raised
            ? $"Raised: {measure}{relative} {over} is {value}, {relation} the raise threshold {threshold}.{brk}{why}"
            : $"Cleared: {measure}{relative} {over} is back to {value}, {relation} the clear threshold {threshold}.{why}";
    }
}
