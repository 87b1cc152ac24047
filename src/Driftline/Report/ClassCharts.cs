using ScottPlot;

namespace Driftline.Report;

/// <summary>Charts of a multiclass run: each class's calibration over time, one against the rest.</summary>
internal static class ClassCharts
{
    /// <summary>Per class, mean predicted probability minus observed rate over the rolling window.</summary>
    public static string Calibration(ReportData run, IReadOnlyList<string> classes)
    {
        ArgumentNullException.ThrowIfNull(run);
        ArgumentNullException.ThrowIfNull(classes);
        using var plot = ReportCharts.NewPlot("Calibration per class", "mean p − observed rate of the class over the window");
        var zero = plot.Add.HorizontalLine(0, 1, Colors.Gray, LinePattern.Solid);
        zero.ExcludeFromLegend = true;
        var points = run.Points.Where(p => p.ClassGaps is not null).ToList();
        for (int k = 0; k < classes.Count; k++)
        {
            int at = k;
            var line = ReportCharts.Line(plot, points, p => p.ClassGaps![at], ReportCharts.Palette[k % ReportCharts.Palette.Length]);
            line.LegendText = classes[k];
        }
        ReportCharts.AlertMarks(plot, run);
        ReportCharts.EventTimeAxis(plot, points);
        plot.ShowLegend(Alignment.UpperLeft);
        return ReportCharts.Export(plot, "class-citl");
    }
}
