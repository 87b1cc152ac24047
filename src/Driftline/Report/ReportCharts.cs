using System.Globalization;
using Driftline.Core.Metrics;
using ScottPlot;

namespace Driftline.Report;

/// <summary>
/// The report's charts, drawn with ScottPlot and exported as SVG. Every chart over time has
/// labels graded on its x axis, the unit the rolling windows and the alerts count in.
/// </summary>
internal static class ReportCharts
{
    /// <summary>Width of a chart in CSS pixels.</summary>
    public const int Width = 880;

    /// <summary>Height of a chart over time.</summary>
    public const int Height = 330;

    /// <summary>Series colours, chosen to stay distinct for colour-blind readers (Okabe–Ito).</summary>
    internal static readonly Color[] Palette =
        [Color.FromHex("#0072B2"), Color.FromHex("#D55E00"), Color.FromHex("#009E73"), Color.FromHex("#CC79A7"), Color.FromHex("#E69F00"), Color.FromHex("#56B4E9")];

    internal static readonly Color Ink = Color.FromHex("#333333");
    internal static readonly Color Faint = Color.FromHex("#888888");
    internal static readonly Color RaiseColour = Color.FromHex("#C0392B");
    internal static readonly Color ClearColour = Color.FromHex("#1E8449");
    internal static readonly Color WarningColour = Color.FromHex("#B9770E");

    private static readonly Lazy<string?> SansFont = new(() =>
        SkiaSharp.SKFontManager.Default.GetFontFamilies().FirstOrDefault(f => f is "DejaVu Sans" or "Liberation Sans" or "Noto Sans"));

    /// <summary>The colour of series <paramref name="i"/>.</summary>
    public static string ColourHex(int i) => Palette[i % Palette.Length].ToHex();

    /// <summary>Rolling log-loss of each run's model, the class-prior baseline of the first, and the alert marks of the first.</summary>
    public static string LogLoss(IReadOnlyList<ReportData> runs, bool alertMarks)
    {
        using var plot = NewPlot("Rolling log-loss", "log-loss over the window (lower is better)");
        for (int r = 0; r < runs.Count; r++)
        {
            var line = Line(plot, runs[r].Points, p => p.LogLoss, Palette[r % Palette.Length]);
            line.LegendText = runs.Count == 1 ? "model" : runs[r].Name;
        }
        if (runs.Count > 0)
        {
            var prior = Line(plot, runs[0].Points, p => p.PriorLogLoss, Faint);
            // Solid: the SVG export drops dash patterns (SkiaSharp's SVG canvas has no path
            // effects, and says so on stderr for every dashed line), so lines differ by colour.
            prior.LineWidth = 1.5f;
            prior.LegendText = "class-prior baseline";
        }
        if (alertMarks && runs.Count == 1)
        {
            AlertMarks(plot, runs[0]);
        }
        if (runs.Count > 0)
        {
            EventTimeAxis(plot, runs[0].Points);
        }
        plot.ShowLegend(Alignment.UpperLeft);
        return Export(plot, "log-loss");
    }

    /// <summary>
    /// Each challenger's mean log-loss minus the champion's over the same paired labels, stretch
    /// by stretch (below zero: the challenger did better there), with a zero line.
    /// </summary>
    public static string ChallengerLoss(IReadOnlyList<ReportData> runs)
    {
        using var plot = NewPlot("Challengers against the champion", "challenger − champion log-loss per stretch (below 0: challenger better)");
        plot.XLabel("labels paired");
        var zero = plot.Add.HorizontalLine(0, 1, Faint, LinePattern.Solid);
        zero.ExcludeFromLegend = true;
        for (int r = 1; r < runs.Count; r++)
        {
            if (runs[r].ChallengerCurve is not { } curve || curve.Points.Count == 0)
            {
                continue;
            }
            var points = curve.Points;
            var line = plot.Add.ScatterLine(points.Select(p => (double)p.Paired).ToArray(), points.Select(p => p.Challenger - p.Champion).ToArray(), Palette[r % Palette.Length]);
            line.LineWidth = 2;
            line.MarkerSize = 0;
            line.LegendText = runs[r].Name;
        }
        plot.ShowLegend(Alignment.UpperLeft);
        return Export(plot, "challengers");
    }

    /// <summary>Rolling expected calibration error of each run.</summary>
    public static string Ece(IReadOnlyList<ReportData> runs)
    {
        using var plot = NewPlot("Expected calibration error", "ECE over the window (lower is better)");
        for (int r = 0; r < runs.Count; r++)
        {
            var line = Line(plot, runs[r].Points, p => p.Ece, Palette[r % Palette.Length]);
            line.LegendText = runs[r].Name;
        }
        if (runs.Count > 0)
        {
            EventTimeAxis(plot, runs[0].Points);
        }
        plot.ShowLegend(Alignment.UpperLeft);
        return Export(plot, "ece");
    }

    /// <summary>Rolling calibration-in-the-large (mean p − mean y) of each run, with a zero line.</summary>
    public static string CalibrationInTheLarge(IReadOnlyList<ReportData> runs, bool alertMarks)
    {
        using var plot = NewPlot("Calibration-in-the-large", "mean p − observed rate over the window");
        var zero = plot.Add.HorizontalLine(0, 1, Faint, LinePattern.Solid);
        zero.ExcludeFromLegend = true;
        for (int r = 0; r < runs.Count; r++)
        {
            var line = Line(plot, runs[r].Points, p => p.CalibrationInTheLarge, Palette[r % Palette.Length]);
            line.LegendText = runs.Count == 1 ? "model" : runs[r].Name;
        }
        if (runs.Count == 1 && runs[0].ServedTotal is not null)
        {
            // Recalibration on: the stream actually served, beside the model's own.
            var served = Line(plot, runs[0].Points, p => p.ServedGap, Palette[3]);
            served.LegendText = "served (recalibrated)";
        }
        if (alertMarks && runs.Count == 1)
        {
            AlertMarks(plot, runs[0]);
        }
        if (runs.Count > 0)
        {
            EventTimeAxis(plot, runs[0].Points);
        }
        plot.ShowLegend(Alignment.UpperLeft);
        return Export(plot, "citl");
    }

    /// <summary>Share of labels that arrived late, and of predictions that expired unlabelled, per stretch of the run.</summary>
    public static string LabelShares(ReportData run)
    {
        using var plot = NewPlot("Late and expired labels", "share per stretch of the run");
        var (xs, late, expired) = Shares(run.Points, 60);
        var lateLine = plot.Add.ScatterLine(xs, late, Palette[0]);
        lateLine.LegendText = "late: labels that came after their event";
        lateLine.LineWidth = 2;
        lateLine.MarkerSize = 0;
        var expiredLine = plot.Add.ScatterLine(xs, expired, Palette[1]);
        expiredLine.LegendText = "expired: predictions that never got a label";
        expiredLine.LineWidth = 2;
        expiredLine.MarkerSize = 0;
        plot.Axes.SetLimitsY(0, 1);
        plot.ShowLegend(Alignment.UpperLeft);
        return Export(plot, "shares");
    }

    /// <summary>
    /// A reliability diagram: mean predicted probability against observed rate per bin, with
    /// 95% Wilson intervals, the diagonal of perfect calibration, and (for a single series) the
    /// number of labels beside each point (diagrams under 400 px leave legend and counts to the caption).
    /// </summary>
    public static string Reliability(string title, IReadOnlyList<(string Name, ReliabilityBin[] Bins)> series, int size = 420)
    {
        using var plot = NewPlot(title, "observed rate of positives");
        plot.XLabel("mean predicted probability");
        var diagonal = plot.Add.Line(0, 0, 1, 1);
        diagonal.LineColor = Faint;
        diagonal.LineWidth = 1;
        diagonal.LegendText = "perfectly calibrated";
        for (int s = 0; s < series.Count; s++)
        {
            var colour = Palette[s % Palette.Length];
            var used = series[s].Bins.Where(b => b.Count > 0).ToArray();
            if (used.Length == 0)
            {
                continue;
            }
            double[] xs = used.Select(b => b.MeanP).ToArray();
            double[] ys = used.Select(b => b.MeanY).ToArray();
            var intervals = used.Select(b => WilsonInterval.Of(b.MeanY * b.Count, b.Count)).ToArray();
            var bars = plot.Add.ErrorBar(xs, ys, new double[xs.Length]);
            bars.YErrorNegative = ys.Select((y, i) => y - intervals[i].Lower).ToArray();
            bars.YErrorPositive = ys.Select((y, i) => intervals[i].Upper - y).ToArray();
            bars.Color = colour;
            bars.LineWidth = 1.5f;
            var points = plot.Add.ScatterPoints(xs, ys, colour);
            points.MarkerSize = 8;
            points.LegendText = series.Count == 1 ? "bin (95% Wilson interval)" : series[s].Name;
            if (series.Count == 1 && size >= 400)
            {
                for (int i = 0; i < used.Length; i++)
                {
                    var label = plot.Add.Text("n=" + used[i].Count.ToString("N0", CultureInfo.InvariantCulture), xs[i], ys[i]);
                    label.LabelFontSize = size < 400 ? 9 : 11;
                    label.LabelFontColor = Ink;
                    // Labels sit right of their point, except near the right edge where they would be cut off.
                    bool right = xs[i] > 0.8;
                    label.LabelAlignment = right ? Alignment.UpperRight : Alignment.LowerLeft;
                    label.OffsetX = right ? -8 : 6;
                    label.OffsetY = right ? 4 : 0;
                }
            }
        }
        plot.Axes.SetLimits(0, 1, 0, 1);
        if (size >= 400 || series.Count > 1)
        {
            plot.ShowLegend(Alignment.UpperLeft);
        }
        else
        {
            // Small diagrams sit in a row under one explanation, with their counts in the
            // caption: a legend or count labels would cover their points.
            plot.HideLegend();
        }
        return Export(plot, "reliability", size, size);
    }

    internal static Plot NewPlot(string title, string yLabel)
    {
        var plot = new Plot();
        // ScottPlot's generic "sans" resolves to a serif face on some Linux boxes; ask for DejaVu Sans by name when it is there.
        if (SansFont.Value is { } sans)
        {
            plot.Font.Set(sans);
        }
        plot.Title(title);
        plot.Axes.Title.Label.FontSize = 15;
        plot.XLabel("labels graded");
        plot.YLabel(yLabel);
        plot.Axes.Bottom.Label.FontSize = 12;
        plot.Axes.Left.Label.FontSize = 12;
        return plot;
    }

    internal static ScottPlot.Plottables.Scatter Line(Plot plot, IReadOnlyList<ReportPoint> points, Func<ReportPoint, double> value, Color colour)
    {
        // NaN values (an empty window) are left out rather than drawn as gaps ScottPlot cannot place.
        var kept = points.Where(p => double.IsFinite(value(p))).ToArray();
        var line = plot.Add.ScatterLine(kept.Select(p => (double)p.Labels).ToArray(), kept.Select(value).ToArray(), colour);
        line.LineWidth = 2;
        line.MarkerSize = 0;
        return line;
    }

    /// <summary>
    /// Marks each raise (solid: red for critical, amber for warning) and clear (green)
    /// with its rule's name, and shades the stretches while an alert was open.
    /// </summary>
    internal static void AlertMarks(Plot plot, ReportData run, string? onlyRule = null, string? onlyClass = null)
    {
        OpenSpans(plot, run, onlyRule, onlyClass);
        var shown = new HashSet<string>(StringComparer.Ordinal);
        foreach (var capture in run.Alerts)
        {
            var a = capture.Alert;
            if (onlyRule is not null && (a.Rule != onlyRule || a.Class != onlyClass))
            {
                continue;
            }
            bool critical = a.Severity == Core.Alerts.AlertSeverity.Critical;
            var colour = !a.Raised ? ClearColour : critical ? RaiseColour : WarningColour;
            var mark = plot.Add.VerticalLine(a.Labels, 1.5f, colour, LinePattern.Solid);
            string kind = !a.Raised ? "cleared" : critical ? "critical raised" : "warning raised";
            if (shown.Add(kind))
            {
                mark.LegendText = kind;
            }
            if (a.Raised && onlyRule is null)
            {
                mark.Text = a.Rule;
                mark.LabelFontSize = 10;
                mark.LabelOppositeAxis = true;
            }
        }
    }

    /// <summary>Shades, lightly, each stretch from a raise to its clear (or the run's end).</summary>
    internal static void OpenSpans(Plot plot, ReportData run, string? onlyRule, string? onlyClass = null)
    {
        long end = run.Points.Count > 0 ? run.Points[^1].Labels : 0;
        var opened = new Dictionary<string, (long At, bool Critical)>(StringComparer.Ordinal);
        var spans = new List<(long From, long To, bool Critical)>();
        foreach (var capture in run.Alerts)
        {
            var a = capture.Alert;
            // A challenger's decision is an event, not a state: it opens nothing to shade.
            if ((onlyRule is not null && (a.Rule != onlyRule || a.Class != onlyClass)) || a.Metric == Core.Alerts.AlertMetric.ChallengerEvidence)
            {
                continue;
            }
            if (a.Raised)
            {
                opened[a.Rule] = (a.Labels, a.Severity == Core.Alerts.AlertSeverity.Critical);
            }
            else if (opened.Remove(a.Rule, out var from))
            {
                spans.Add((from.At, a.Labels, from.Critical));
            }
        }
        spans.AddRange(opened.Values.Select(o => (o.At, Math.Max(o.At, end), o.Critical)));
        bool inLegend = false;
        foreach (var (from, to, critical) in spans)
        {
            var span = plot.Add.HorizontalSpan(from, to);
            span.FillStyle.Color = (critical ? RaiseColour : WarningColour).WithAlpha(0.10);
            span.LineStyle.Width = 0;
            if (!inLegend)
            {
                span.LegendText = "alert open";
                inLegend = true;
            }
        }
    }

    /// <summary>
    /// Where events carry a time, labels the x axis (labels graded) with the event time too, two
    /// lines a tick, so a reader can tell when in the day or week a stretch was.
    /// </summary>
    internal static void EventTimeAxis(Plot plot, IReadOnlyList<ReportPoint> points)
    {
        if (points.Count < 2 || points.Any(p => p.TimeTicks == Core.Events.ParsedRecord.NoTime))
        {
            return;
        }
        long last = points[^1].Labels;
        double raw = last / 5.0;
        double magnitude = Math.Pow(10, Math.Floor(Math.Log10(Math.Max(1, raw))));
        double step = new[] { 1.0, 2.0, 2.5, 5.0, 10.0 }.Select(m => m * magnitude).First(v => v >= raw);
        var ticks = new ScottPlot.TickGenerators.NumericManual();
        int at = 0;
        for (double x = 0; x <= last; x += step)
        {
            while (at < points.Count - 1 && points[at].Labels < x)
            {
                at++;
            }
            var time = new DateTime(points[at].TimeTicks, DateTimeKind.Utc);
            ticks.AddMajor(x, x.ToString("N0", CultureInfo.InvariantCulture) + "\n" + time.ToString("MM-dd HH:mm", CultureInfo.InvariantCulture));
        }
        plot.Axes.Bottom.TickGenerator = ticks;
        plot.XLabel("labels graded, and the event time then (UTC)");
    }

    private static (double[] X, double[] Late, double[] Expired) Shares(IReadOnlyList<ReportPoint> points, int stretches)
    {
        var xs = new List<double>();
        var late = new List<double>();
        var expired = new List<double>();
        if (points.Count < 2)
        {
            return ([], [], []);
        }
        int step = Math.Max(1, points.Count / stretches);
        var previous = new ReportPoint(0, 0, 0, 0, 0, 0, 0, 0, 0);
        for (int i = step - 1; i < points.Count; i += step)
        {
            var p = points[i];
            long labels = p.Labels - previous.Labels;
            long dropped = p.ExpiredLabels - previous.ExpiredLabels;
            if (labels + dropped > 0)
            {
                xs.Add(p.Labels);
                late.Add(labels > 0 ? (double)(p.LateLabels - previous.LateLabels) / labels : 0);
                expired.Add((double)dropped / (labels + dropped));
            }
            previous = p;
        }
        return ([.. xs], [.. late], [.. expired]);
    }

    private static int _charts;

    internal static string Export(Plot plot, string kind, int width = Width, int height = Height)
    {
        int n = Interlocked.Increment(ref _charts);
        return SvgFragment.Inline(plot.GetSvgXml(width, height), $"{kind}{n}-", plot.Axes.Title.Label.Text);
    }
}
