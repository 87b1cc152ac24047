using System.Globalization;
using System.Text;
using Driftline.Cli;
using Driftline.Core.Events;
using Driftline.Core.Options;

namespace Driftline.Report;

/// <summary>
/// Writes <c>report.html</c>: for one configuration, its run in charts and tables; for
/// several, the same measures side by side so a half-life or a learner can be chosen on
/// evidence. Readable without JavaScript and without a network.
/// </summary>
internal static class ReportWriter
{
    /// <summary>File name of the report in an output folder.</summary>
    public const string FileName = "report.html";

    /// <summary>Most alert rows in a table; a rule that flaps thousands of times would otherwise bury the page.</summary>
    public const int MaxAlertRows = 200;

    /// <summary>Most raises that get their before/when/after diagrams.</summary>
    public const int MaxAlertWindows = 20;

    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    /// <summary>Writes the report of one run to <paramref name="path"/>, whole, through a temporary name.</summary>
    /// <exception cref="Output.OutputException">The file cannot be written.</exception>
    public static void WriteSingle(string path, string input, ReportData run, Func<string, Stream>? create = null) =>
        WriteText(path, Single(input, run), create);

    /// <summary>Writes the comparison of several runs over the same input to <paramref name="path"/>, whole, through a temporary name.</summary>
    /// <exception cref="Output.OutputException">The file cannot be written.</exception>
    public static void WriteComparison(string path, string input, IReadOnlyList<ReportData> runs, Func<string, Stream>? create = null) =>
        WriteText(path, Comparison(input, runs), create);

    private static void WriteText(string path, string html, Func<string, Stream>? create)
    {
        byte[] bytes = new UTF8Encoding(false).GetBytes(html);
        Output.OutputFile.Write(path, file => file.Write(bytes), create);
    }

    /// <summary>
    /// Renders a small throwaway report, so that the chart library's first-use costs (loading
    /// fonts, native set-up, code not compiled ahead of time) are paid while the replay still
    /// runs, not after it.
    /// </summary>
    public static void WarmUp()
    {
        var options = new DriftlineOptions();
        var run = new ReportData("warm-up", options);
        for (int i = 1; i <= 3; i++)
        {
            run.Points.Add(new ReportPoint(i * 1000, i * 1500, 1000, 0.5, 0.6, 0.01 * i, 0.02, i * 300, 0));
        }
        var totals = new Core.Metrics.CalibrationTotals(options.Monitor.Bins);
        totals.Add(0.25, 0);
        totals.Add(0.75, 1);
        run.WholeRun = new Core.Metrics.ReliabilityBin[totals.Bins];
        totals.CopyBins(run.WholeRun);
        _ = Single("warm-up", run);
    }

    /// <summary>The report of one run, as HTML.</summary>
    public static string Single(string input, ReportData run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var page = new HtmlPage($"Driftline replay: {Path.GetFileName(input)}");
        page.Heading(1, "Replay report")
            .Paragraph($"{input} replayed with configuration '{run.Name}': {run.Counters.Events:N0} events scored, {run.Counters.Labels:N0} labels graded, {run.Counters.AlertsRaised:N0} {(run.Counters.AlertsRaised == 1 ? "alert" : "alerts")} raised.", "lead");

        page.Heading(2, "Summary", "summary").Table(["measure", "value"], SummaryRows(run));

        int window = run.Options.Monitor.Window;
        page.Heading(2, "Loss over time", "loss")
            .Raw(HtmlPage.Figure(ReportCharts.LogLoss([run], alertMarks: true),
                $"Log-loss of the model and of the class-prior baseline over the last {window:N0} labels. The model earns its keep while its line stays below the grey baseline; where they meet or cross, it predicts no better than the base rate. Marks name the rule that raised (red: critical, amber: warning); green lines are clears, and shading shows while an alert was open."));
        page.Heading(2, "Calibration over time", "calibration")
            .Raw(HtmlPage.Figure(ReportCharts.CalibrationInTheLarge([run], alertMarks: true),
                $"Mean predicted probability minus the observed rate over the last {window:N0} labels. Zero means the probabilities are right on average; above zero the model over-predicts, below it under-predicts. A drift away from zero is the first sign that a probability no longer means what it says."));
        RuleSections(page, run);
        page.Heading(2, "Ranking and accuracy over time", "ranking")
            .Raw(HtmlPage.Figure(RuleCharts.AucAndBrier(run),
                $"AUC (the chance that a positive is scored above a negative) and Brier score (mean squared error of the probability) over the last {window:N0} labels. AUC is about ranking only: it can stay high while calibration breaks, which is why the rules above watch calibration too."));
        page.Heading(2, "Reliability over the whole run", "reliability")
            .Raw(HtmlPage.Figure(ReportCharts.Reliability("Whole run", [("model", run.WholeRun)], 520),
                "Each point is one probability bin: mean predicted probability across, observed rate of positives up, with its 95% Wilson interval and the number of labels in it. Points on the grey diagonal are calibrated; an interval that misses the diagonal is a bin the model gets wrong beyond chance."
                + (run.ClassBins.Count > 0 ? " For this multiclass model it is the top label's: the most probable class's probability against how often that class was right." : "")));
        if (run.ClassBins.Count > 0)
        {
            var names = run.ClassBins.Select(c => c.Class).ToList();
            page.Heading(2, "Calibration per class over time", "class-calibration")
                .Raw(HtmlPage.Figure(ClassCharts.Calibration(run, names),
                    $"For each class against the rest: mean predicted probability minus the observed rate of that class over the last {window:N0} labels. A class whose line leaves zero is the one the model now gets wrong; alerts about one class name it."));
            if (run.Confusion is { } confusion)
            {
                int k = names.Count;
                page.Heading(2, "Predicted against observed class", "confusion")
                    .Paragraph("Labels over the whole run by observed class (rows) and the class the model gave the highest probability (columns).")
                    .Table(["observed \\ predicted", .. names, "labels"], Enumerable.Range(0, k).Select(r =>
                        (IReadOnlyList<string>)[names[r], .. Enumerable.Range(0, k).Select(c => confusion[r * k + c].ToString("N0", System.Globalization.CultureInfo.InvariantCulture)),
                            Enumerable.Range(0, k).Sum(c => confusion[r * k + c]).ToString("N0", System.Globalization.CultureInfo.InvariantCulture)]));
            }
            page.Heading(2, "Reliability per class", "classes");
            foreach (var (name, bins) in run.ClassBins)
            {
                page.Raw(HtmlPage.Figure(ReportCharts.Reliability($"Class '{name}'", [(name, bins)], 360),
                    $"Class '{name}' against the rest over the whole run: the predicted probability of '{name}' across, how often the outcome was '{name}' up, with 95% Wilson intervals and counts."));
            }
        }

        page.Heading(2, "Alerts", "alerts");
        if (run.Alerts.Count == 0)
        {
            page.Paragraph("No alert was raised.");
        }
        else
        {
            page.Paragraph("Every raise and clear, in order. Below the table, the reliability of the rolling window before, when and after each raise, and how its predicted probabilities were spread.");
            page.Table(["#", "incident", "rule", "severity", "state", "at label", "event time", "event", "why"], AlertRows([run], withConfig: false), "alerts");
            AlertWindows(page, run);
        }

        if (run.Segments.Count > 0)
        {
            page.Heading(2, $"Segments by {run.Options.Monitor.SegmentBy}", "segments")
                .Paragraph($"Each value of {run.Options.Monitor.SegmentBy} over its own last {run.Options.Monitor.Window:N0} labels at the end of the run, furthest off first: the gap is mean p − observed rate, z is that gap in standard errors (so a small segment needs a bigger gap to rank high). At most {ReportRecorder.MaxSegmentRows} are listed.")
                .Table(["segment", "labels", "mean p", "observed rate", "gap", "z"], run.Segments.Select(g => (IReadOnlyList<string>)
                [
                    g.Segment, $"#num {g.Count:N0}", Num(g.MeanP), Num(g.ObservedRate), Num(g.MeanP - g.ObservedRate), "#num " + (double.IsFinite(g.Z) ? g.Z.ToString("0.0", C) : "–"),
                ]));
        }

        page.Heading(2, "Late and expired labels", "labels")
            .Raw(HtmlPage.Figure(ReportCharts.LabelShares(run),
                $"Of the labels graded in each stretch of the run, the share that arrived after their event (late); and of the predictions resolved, the share dropped unlabelled after {Words(run.Options.Labels.MaxAge)} of event time or when more than {run.Options.Labels.MaxPending:N0} were waiting (expired). A rising expired share means the windows judge the model on a biased subset of outcomes."));

        page.Heading(2, "Settings", "settings").Raw("<pre>" + HtmlPage.Encode(Describe(run.Options)) + "</pre>");
        return page.ToString();
    }

    /// <summary>The comparison of several runs, as HTML.</summary>
    public static string Comparison(string input, IReadOnlyList<ReportData> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var page = new HtmlPage($"Driftline comparison: {Path.GetFileName(input)}");
        page.Heading(1, "Configurations side by side")
            .Paragraph($"{input} replayed once through {runs.Count} configurations, each with its own model over the same parsed events: {string.Join(", ", runs.Select(r => r.Name))}.", "lead");

        page.Heading(2, "Final figures", "figures")
            .Table(["configuration", "learner", "half-life", "log-loss", "prior", "skill", "Brier", "ECE", "mean p − rate", "alerts", "open at end"],
                runs.Select((r, i) => (IReadOnlyList<string>)
                [
                    r.Name,
                    r.Options.Model.Learner == LearnerKind.Ftrl ? "FTRL-Proximal" : "AdaGrad",
                    r.Options.Model.HalfLifeLabels > 0 ? $"#num {r.Options.Model.HalfLifeLabels:N0} labels" : "off",
                    Num(r.Total.LogLoss), Num(r.PriorTotal.LogLoss), Pct(r.Skill), Num(r.Total.Brier), Num(r.Total.Ece),
                    Num(r.Total.CalibrationInTheLarge), $"#num {r.Counters.AlertsRaised:N0}",
                    r.OpenAlerts.Count == 0 ? "none" : string.Join(", ", r.OpenAlerts),
                ]))
            .Paragraph("Skill is 1 − model log-loss / prior log-loss over the whole run: the share of the baseline's loss the model removes. Each configuration's own report, with its alert windows, is in its folder: follow its name below.");

        if (runs.Skip(1).Any(r => r.Challenger is not null))
        {
            page.Heading(2, "Challengers against the champion", "challengers")
                .Paragraph($"Each configuration after the first is judged against '{runs[0].Name}' by a sequential test on the paired per-label log-loss differences (testing by betting, Waudby-Smith & Ramdas 2024): a challenger is declared better when its evidence reaches ln(1/α), with α = {runs[0].Options.Challengers.ErrorRate.ToString("0.###", C)} the chance of declaring a challenger that is not better, however long the run. After a decision the test starts afresh.")
                .Table(["challenger", "paired labels", "champion log-loss", "its log-loss", "evidence now", "threshold", "declared better at paired label"],
                    runs.Skip(1).Where(r => r.Challenger is not null).Select(r => (IReadOnlyList<string>)
                    [
                        r.Name, $"#num {r.Challenger!.Paired:N0}", Num(r.Challenger.ChampionLogLoss), Num(r.Challenger.ChallengerLogLoss),
                        Num(r.Challenger.Evidence), Num(r.Challenger.Threshold),
                        r.Challenger.DecidedAt.Count == 0 ? "never" : string.Join(", ", r.Challenger.DecidedAt.Take(10).Select(d => d.ToString("N0", C))),
                    ]));
            page.Raw(HtmlPage.Figure(ReportCharts.ChallengerLoss(runs),
                    $"Over time: each challenger's mean log-loss minus '{runs[0].Name}''s on the same labels, over stretches of at least {ChallengerCurve.FirstStretch:N0} paired labels. A line that settles below zero after a change is a challenger that copes with it better; one that wanders around zero is not separated, as the test says."))
                .Raw(HtmlPage.Figure(ReportCharts.Ece(runs),
                    "Rolling expected calibration error of the champion and each challenger over their own windows."));
        }

        // The key doubles as the way into each configuration's own report (relative links work offline).
        page.Raw("<p class=\"key\">" + string.Join(" ", runs.Select((r, i) =>
            $"<a href=\"{Uri.EscapeDataString(r.Name)}/{FileName}\"><span class=\"swatch\" style=\"background:{ReportCharts.ColourHex(i)}\"></span>{HtmlPage.Encode(r.Name)}</a>")) + "</p>");
        page.Heading(2, "Loss over time", "loss")
            .Raw(HtmlPage.Figure(ReportCharts.LogLoss(runs, alertMarks: false),
                "Rolling log-loss of each configuration over its own window, with the class-prior baseline of the first in grey. The configuration that stays lowest through the hard stretches, and comes back down fastest after them, forgets at the right pace."));
        page.Heading(2, "Calibration over time", "calibration")
            .Raw(HtmlPage.Figure(ReportCharts.CalibrationInTheLarge(runs, alertMarks: false),
                "Mean predicted probability minus observed rate over each configuration's window. The closer a line keeps to zero, the more its probabilities can be taken at face value."));
        page.Heading(2, "Reliability over the whole run", "reliability")
            .Raw(HtmlPage.Figure(ReportCharts.Reliability("Whole run", runs.Select(r => (r.Name, r.WholeRun)).ToList(), 520),
                "Mean predicted probability against observed rate per bin for each configuration, with 95% Wilson intervals. Points nearer the grey diagonal are better calibrated."));

        page.Heading(2, "Alerts", "alerts");
        if (runs.All(r => r.Alerts.Count == 0))
        {
            page.Paragraph("No configuration raised an alert.");
        }
        else
        {
            page.Table(["#", "configuration", "incident", "rule", "severity", "state", "at label", "event time", "event", "why"], AlertRows(runs, withConfig: true), "alerts");
        }

        page.Heading(2, "Settings", "settings");
        foreach (var run in runs)
        {
            page.Heading(3, run.Name).Raw("<pre>" + HtmlPage.Encode(Describe(run.Options)) + "</pre>");
        }
        return page.ToString();
    }

    // One chart per rule that has a series: the value it compared, its raise and clear lines, its
    // own open stretches; for the sequential test, its evidence against the threshold.
    private static void RuleSections(HtmlPage page, ReportData run)
    {
        if (!run.Rules.Any(r => r is not null))
        {
            return;
        }
        page.Heading(2, "What each rule watched", "rules")
            .Paragraph("Each rule over its own window, with the line it raises at (red) and the line it clears at (green); shaded stretches are the times it was raised. A threshold rule clears only after its value has stayed past the clear line for its hold.");
        for (int i = 0; i < run.Rules.Count; i++)
        {
            if (run.Rules[i] is not { } rule)
            {
                continue;
            }
            string caption = rule.IsEvidence
                ? $"The sequential calibration test's evidence against calibration: the largest of its CUSUMs, in log-likelihood-ratio units. It raises at {rule.Raise.ToString("0.0", C)} (at most one false alarm per {rule.LabelsPerFalseAlarm:N0} labels on a calibrated stream{(rule.Class is null ? "" : $", for this class; the classes' tests together keep the configured rate")}) and clears once the evidence has fallen to {rule.Clear.ToString("0.0", C)}."
                : $"{rule.Description}, as the rule computed it after each label (sampled). Raise at {rule.Raise.ToString("0.####", C)}, clear at {rule.Clear.ToString("0.####", C)}.";
            page.Raw(HtmlPage.Figure(RuleCharts.RuleSeries(run, i), caption));
        }
    }

    private static void AlertWindows(HtmlPage page, ReportData run)
    {
        int n = 0, drawn = 0;
        foreach (var capture in run.Alerts)
        {
            n++;
            if (!capture.Alert.Raised)
            {
                continue;
            }
            if (++drawn > MaxAlertWindows)
            {
                page.Paragraph($"Diagrams are drawn for the first {MaxAlertWindows} raises only; alerts.jsonl lists every one.");
                break;
            }
            var a = capture.Alert;
            page.Heading(3, $"Alert {n}: {a.Rule} raised at label {a.Labels:N0}");
            var figures = new List<string>();
            if (capture.Before is { } before)
            {
                figures.Add(SmallDiagram("Before", before, "the window that ended as the alerting one began"));
            }
            figures.Add(SmallDiagram("When raised", capture.At, "what the rule saw"));
            if (capture.After is { } after)
            {
                bool full = after.Labels >= capture.At.Labels + run.Options.Monitor.Window;
                figures.Add(SmallDiagram("After", after, full ? "one window later" : "the last window (the run ended within a window of the alert)"));
            }
            page.Raw("<div class=\"row\">\n" + string.Join("\n", figures) + "\n</div>");
            if (run.ClassBins.Count > 0 && capture.Before is { Confusion: { } from } && capture.At.Confusion is { } to)
            {
                ConfusionBetween(page, run.ClassBins.Select(c => c.Class).ToList(), from, to,
                    $"Labels {capture.Before.Labels + 1:N0}–{capture.At.Labels:N0}, the stretch up to the raise, by observed class (rows) and the class given the highest probability (columns).");
                if (capture.After is { Confusion: { } later })
                {
                    ConfusionBetween(page, run.ClassBins.Select(c => c.Class).ToList(), to, later,
                        $"Labels {capture.At.Labels + 1:N0}–{capture.After.Labels:N0}, after the raise, the same way.");
                }
            }
            page.Raw(HtmlPage.Figure(RuleCharts.Distribution(capture),
                "Share of the window's labels per probability bin, before, when and after the raise: mass moving towards 0 and 1 is growing confidence, towards the middle shrinking confidence."));
        }
    }

    // Observed × predicted counts of the labels graded between two captures.
    private static void ConfusionBetween(HtmlPage page, IReadOnlyList<string> names, long[] from, long[] to, string caption)
    {
        int k = names.Count;
        page.Paragraph(caption).Table(["observed \\ predicted", .. names, "labels"], Enumerable.Range(0, k).Select(r =>
            (IReadOnlyList<string>)[names[r], .. Enumerable.Range(0, k).Select(c => "#num " + (to[r * k + c] - from[r * k + c]).ToString("N0", C)),
                "#num " + Enumerable.Range(0, k).Sum(c => to[r * k + c] - from[r * k + c]).ToString("N0", C)]));
    }

    private static string SmallDiagram(string title, BinsCapture window, string which)
    {
        string counts = string.Join(" · ", window.Bins.Select(b => b.Count.ToString("N0", C)));
        return HtmlPage.Figure(ReportCharts.Reliability(title, [("window", window.Bins)], 300),
            $"Labels {window.FirstLabel:N0}–{window.Labels:N0}: {which}. Labels per bin, 0 to 1: {counts}.");
    }

    private static IEnumerable<IReadOnlyList<string>> AlertRows(IReadOnlyList<ReportData> runs, bool withConfig)
    {
        int n = 0;
        foreach (var run in runs)
        {
            foreach (var capture in run.Alerts)
            {
                var a = capture.Alert;
                if (++n > MaxAlertRows)
                {
                    yield return withConfig
                        ? ["", "", "", "", "", "", "", "", "", $"… the first {MaxAlertRows} are shown; each configuration's alerts.jsonl lists every one."]
                        : ["", "", "", "", "", "", "", "", $"… the first {MaxAlertRows} are shown; alerts.jsonl lists every one."];
                    yield break;
                }
                var row = new List<string> { $"#num {n}" };
                if (withConfig)
                {
                    row.Add(run.Name);
                }
                row.Add(a.Incident > 0 ? $"#num {a.Incident:N0}" : "–");
                row.Add(a.Rule);
                row.Add(a.Severity == Core.Alerts.AlertSeverity.Critical ? "#critical critical" : "#warning warning");
                row.Add(a.Raised ? "#raised raised" : "#cleared cleared");
                row.Add($"#num {a.Labels:N0}");
                row.Add(a.TimeTicks == ParsedRecord.NoTime ? "–" : new DateTime(a.TimeTicks, DateTimeKind.Utc).ToString("yyyy-MM-dd HH:mm:ss 'UTC'", C));
                row.Add(a.EventId);
                row.Add(RecordJson.Describe(a));
                yield return row;
            }
        }
    }

    private static IEnumerable<IReadOnlyList<string>> SummaryRows(ReportData r)
    {
        var c = r.Counters;
        yield return ["events scored", $"#num {c.Events:N0}"];
        yield return ["labels graded", $"#num {c.Labels:N0}"];
        yield return ["of which came with their event", $"#num {c.InlineLabels:N0}"];
        yield return ["of which came late", $"#num {c.LateLabels:N0}"];
        yield return ["predictions expired unlabelled", $"#num {r.ExpiredLabels:N0}"];
        yield return ["predictions still waiting at the end", $"#num {r.WaitingLabels:N0}"];
        yield return ["dead letters", $"#num {r.DeadLetters:N0}"];
        yield return ["log-loss, model", Num(r.Total.LogLoss)];
        yield return ["log-loss, class prior", Num(r.PriorTotal.LogLoss)];
        yield return ["skill over the prior", Pct(r.Skill)];
        bool classes = r.ClassBins.Count > 0;
        yield return [classes ? "Brier score, summed over classes" : "Brier score", Num(r.Total.Brier)];
        yield return [classes ? "expected calibration error of the top label" : "expected calibration error", Num(r.Total.Ece)];
        yield return [classes ? "mean top-label probability − accuracy" : "calibration-in-the-large (mean p − rate)", Num(r.Total.CalibrationInTheLarge)];
        if (classes)
        {
            yield return ["accuracy (top label right)", Num(r.Total.MeanY)];
        }
        if (r.ServedTotal is { } served)
        {
            yield return ["log-loss, served (recalibrated)", Num(served.LogLoss)];
            if (classes)
            {
                yield return ["Brier score summed over classes, served", Num(served.Brier)];
            }
            yield return [classes ? "expected calibration error of the top label, served" : "expected calibration error, served", Num(served.Ece)];
            yield return [classes ? "mean top-label probability − accuracy, served" : "calibration-in-the-large, served", Num(served.CalibrationInTheLarge)];
            foreach (var (key, a, b) in r.Recalibrations.Take(classes ? 40 : 10))
            {
                yield return [classes ? $"vector scaling of '{key}' (p' = softmax(b·ln p + a))" : $"recalibration of '{key}' (p' = σ(a + b·logit p))", $"#num a = {a.ToString("0.000", C)}, b = {b.ToString("0.000", C)}"];
            }
        }
        yield return ["alerts raised / cleared", $"#num {c.AlertsRaised:N0} / {c.AlertsCleared:N0}"];
        yield return ["incidents (stretches with any alert raised)", $"#num {c.Incidents:N0}"];
        yield return ["alerts open at the end", r.OpenAlerts.Count == 0 ? "none" : string.Join(", ", r.OpenAlerts)];
        yield return ["replay time", $"#num {r.Elapsed.TotalSeconds.ToString("0.0", C)} s"];
    }

    private static string Describe(DriftlineOptions options)
    {
        using var text = new StringWriter(C);
        CheckCommand.Describe(options, text);
        return text.ToString();
    }

    private static string Words(TimeSpan t) =>
        t.TotalDays >= 1 && t.TotalDays == Math.Floor(t.TotalDays) ? $"{t.TotalDays:0} day{(t.TotalDays == 1 ? "" : "s")}"
        : t.TotalHours >= 1 ? $"{t.TotalHours.ToString("0.#", C)} hours"
        : $"{t.TotalMinutes.ToString("0.#", C)} minutes";

    private static string Num(double v) => "#num " + (double.IsFinite(v) ? v.ToString("0.0000", C) : "–");

    private static string Pct(double v) => "#num " + (double.IsFinite(v) ? (100 * v).ToString("0.0", C) + "%" : "–");
}
