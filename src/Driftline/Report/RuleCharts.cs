using System.Globalization;
using ScottPlot;

namespace Driftline.Report;

/// <summary>
/// The charts that answer "why did this alert fire": each rule's own series against its raise
/// and clear lines, the sequential test's evidence against its threshold, AUC and Brier over
/// time, and how the predicted probabilities were spread before, at and after a raise.
/// </summary>
internal static class RuleCharts
{
    /// <summary>
    /// What rule <paramref name="index"/> of <paramref name="run"/> compared with its thresholds,
    /// over the run, with the raise and clear lines and its own open stretches shaded.
    /// </summary>
    public static string RuleSeries(ReportData run, int index)
    {
        var rule = run.Rules[index] ?? throw new ArgumentException("the rule has no series to draw", nameof(index));
        using var plot = ReportCharts.NewPlot($"{rule.Name}{(rule.Class is null ? "" : $", class '{rule.Class}'")} ({(rule.Severity == Core.Alerts.AlertSeverity.Critical ? "critical" : "warning")})", rule.Description);
        var line = ReportCharts.Line(plot, run.Points, p => p.RuleValues is { } v && index < v.Length ? v[index] : double.NaN, ReportCharts.Palette[0]);
        line.LegendText = rule.IsEvidence ? "evidence" : "value the rule saw";
        var raise = plot.Add.HorizontalLine(rule.Raise, 1.5f, ReportCharts.RaiseColour, LinePattern.Solid);
        raise.LegendText = $"raise at {Number(rule.Raise)}";
        var clear = plot.Add.HorizontalLine(rule.Clear, 1.5f, ReportCharts.ClearColour, LinePattern.Solid);
        clear.LegendText = $"clear at {Number(rule.Clear)}";
        ReportCharts.AlertMarks(plot, run, rule.Name, rule.Class);
        ReportCharts.EventTimeAxis(plot, run.Points);
        plot.ShowLegend(Alignment.UpperLeft);
        return ReportCharts.Export(plot, "rule");
    }

    /// <summary>AUC and Brier score over the report window, over the run.</summary>
    public static string AucAndBrier(ReportData run)
    {
        using var plot = ReportCharts.NewPlot("Ranking and accuracy over time", $"over the last {run.Options.Monitor.Window:N0} labels");
        var auc = ReportCharts.Line(plot, run.Points, p => p.Auc, ReportCharts.Palette[0]);
        auc.LegendText = "AUC (higher ranks better; 0.5 is chance)";
        var brier = ReportCharts.Line(plot, run.Points, p => p.Brier, ReportCharts.Palette[1]);
        brier.LegendText = "Brier score (lower is better)";
        ReportCharts.AlertMarks(plot, run);
        ReportCharts.EventTimeAxis(plot, run.Points);
        plot.Axes.SetLimitsY(0, 1);
        plot.ShowLegend(Alignment.MiddleRight);
        return ReportCharts.Export(plot, "auc");
    }

    /// <summary>
    /// The share of the window's labels in each probability bin before, when and after a raise:
    /// a model that has grown over- or under-confident moves its mass outwards or inwards.
    /// </summary>
    public static string Distribution(AlertCapture capture)
    {
        ArgumentNullException.ThrowIfNull(capture);
        var windows = new List<(string Name, BinsCapture Bins)>();
        if (capture.Before is { } before)
        {
            windows.Add(("before", before));
        }
        windows.Add(("when raised", capture.At));
        if (capture.After is { } after)
        {
            windows.Add(("after", after));
        }
        using var plot = ReportCharts.NewPlot("Predicted probabilities", "share of the window's labels");
        plot.XLabel("predicted probability (bin)");
        int bins = capture.At.Bins.Length;
        double width = 1.0 / bins / (windows.Count + 1);
        for (int w = 0; w < windows.Count; w++)
        {
            var b = windows[w].Bins.Bins;
            double total = Math.Max(1, b.Sum(x => (double)x.Count));
            var bars = b.Select((x, i) => new Bar
            {
                Position = (i + 0.5) / bins + (w - (windows.Count - 1) / 2.0) * width,
                Value = x.Count / total,
                Size = width * 0.9,
                FillColor = ReportCharts.Palette[w],
                LineWidth = 0,
            }).ToList();
            var plottable = plot.Add.Bars(bars);
            plottable.LegendText = windows[w].Name;
        }
        plot.Axes.SetLimitsX(0, 1);
        plot.Axes.Margins(bottom: 0);
        plot.ShowLegend(Alignment.UpperRight);
        return ReportCharts.Export(plot, "distribution", ReportCharts.Width, 260);
    }

    private static string Number(double v) => v.ToString("0.####", CultureInfo.InvariantCulture);
}
