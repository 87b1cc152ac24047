using System.Runtime.CompilerServices;
using Driftline.Core.Alerts;
using Driftline.Core.Metrics;
using Driftline.Core.Options;

namespace Driftline.Core.Scoring;

/// <summary>
/// One stream of graded (p, y) pairs with its windows, whole-run totals and alert rules, for
/// the model and its class prior side by side. A binary model has one channel fed (p, y). A
/// multiclass model has one channel for the whole model, fed the true class's probability
/// as (p_y, 1) so its log-loss is the multiclass log-loss, and one channel per class fed
/// (p_k, [y = k]), one class against the rest; calibration measures and their rules run there.
/// </summary>
internal sealed class GradingChannel
{
    /// <summary>Creates the windows and rules of one channel; <paramref name="rules"/> are those it runs.</summary>
    public GradingChannel(DriftlineOptions options, IReadOnlyList<AlertRuleOptions> rules, string? className)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(rules);
        ClassName = className;
        // The windows its own rules read and the reported one (a binary model's one channel runs
        // every rule, so it has exactly the windows it always had).
        var sizes = rules.Where(r => r.WindowTime is null).Select(r => r.Window).Append(options.Monitor.Window).Distinct().Order().ToArray();
        // A time window holds the last T of event time, at most the rule's Window labels.
        var spans = rules.Where(r => r.WindowTime is not null).Select(r => (Span: r.WindowTime!.Value, Max: r.Window)).Distinct().ToArray();
        int bins = options.Monitor.Bins;
        TimeWindows = spans.Select(t => (t.Span, new TimeWindow(t.Span, t.Max, bins), new TimeWindow(t.Span, t.Max, bins))).ToArray();
        RuleTimeWindow = rules.Select(r => r.WindowTime is null ? -1 : Array.IndexOf(spans, (r.WindowTime.Value, r.Window))).ToArray();
        Windows = sizes.Select(s => (s, new CalibrationWindow(s, bins), new CalibrationWindow(s, bins))).ToArray();
        ReportWindow = Array.IndexOf(sizes, options.Monitor.Window);
        Rules = rules.Select(r => (new AlertRule(r), Array.IndexOf(sizes, r.Window))).ToArray();
        Totals = new CalibrationTotals(bins);
        PriorTotals = new CalibrationTotals(bins);
    }

    /// <summary>The class this channel watches one against the rest, or null for the whole model.</summary>
    public string? ClassName { get; }

    /// <summary>Count windows: size, model, prior.</summary>
    public (int Size, CalibrationWindow Model, CalibrationWindow Prior)[] Windows { get; }

    /// <summary>Time windows: span, model, prior.</summary>
    public (TimeSpan Span, TimeWindow Model, TimeWindow Prior)[] TimeWindows { get; }

    /// <summary>The rules and the count window each reads.</summary>
    public (AlertRule Rule, int Window)[] Rules { get; }

    /// <summary>Per rule, the time window it reads, or −1 for a count window.</summary>
    public int[] RuleTimeWindow { get; }

    /// <summary>Index of the reported window (<c>Monitor:Window</c>) in <see cref="Windows"/>.</summary>
    public int ReportWindow { get; }

    /// <summary>The model over the whole run.</summary>
    public CalibrationTotals Totals { get; set; }

    /// <summary>The class prior over the whole run.</summary>
    public CalibrationTotals PriorTotals { get; set; }

    /// <summary>The reported rolling window of the model.</summary>
    public CalibrationWindow Window => Windows[ReportWindow].Model;

    /// <summary>The reported rolling window of the prior.</summary>
    public CalibrationWindow PriorWindow => Windows[ReportWindow].Prior;

    /// <summary>Adds one graded pair (and the prior's) to every window and total.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public void Add(in GradedTerms terms, in GradedTerms priorTerms, long timeTicks)
    {
        Totals.Add(terms);
        PriorTotals.Add(priorTerms);
        foreach (var (_, window, priorWindow) in Windows)
        {
            window.Add(terms);
            priorWindow.Add(priorTerms);
        }
        if (timeTicks != Events.ParsedRecord.NoTime)
        {
            var at = new DateTimeOffset(timeTicks, TimeSpan.Zero);
            foreach (var (_, window, priorWindow) in TimeWindows)
            {
                window.Add(at, terms);
                priorWindow.Add(at, priorTerms);
            }
        }
    }

    /// <summary>The window rule <paramref name="r"/> reads, for the model and the prior.</summary>
    public (IGradedWindow Model, IGradedWindow Prior) WindowsOf(int r)
    {
        int t = RuleTimeWindow[r];
        return t >= 0 ? (TimeWindows[t].Model, TimeWindows[t].Prior) : (Windows[Rules[r].Window].Model, Windows[Rules[r].Window].Prior);
    }
}
