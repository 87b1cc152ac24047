using Driftline.Core.Metrics;
using Driftline.Core.Options;
using Driftline.Core.Scoring;

namespace Driftline.Report;

/// <summary>What the report shows of one configuration's run: the series, the alerts with their windows, and the final figures.</summary>
internal sealed class ReportData
{
    /// <summary>Creates the data of a run named <paramref name="name"/>.</summary>
    public ReportData(string name, DriftlineOptions options)
    {
        Name = name;
        Options = options;
    }

    /// <summary>Configuration name (the config file's name without extension, or "default").</summary>
    public string Name { get; }

    /// <summary>The options the run used.</summary>
    public DriftlineOptions Options { get; }

    /// <summary>Rolling measures over the run, in label order.</summary>
    public List<ReportPoint> Points { get; } = [];

    /// <summary>The rules drawn, in the order of <see cref="ReportPoint.RuleValues"/>; rules the report cannot draw are null.</summary>
    public List<ReportRule?> Rules { get; } = [];

    /// <summary>The segments' calibration at the end, furthest off first, when <c>Monitor:SegmentBy</c> is set.</summary>
    public List<Core.Scoring.SegmentGap> Segments { get; } = [];

    /// <summary>Every alert transition, in order, with the windows around it.</summary>
    public List<AlertCapture> Alerts { get; } = [];

    /// <summary>Reliability bins over the whole run (a multiclass model's: its top label's).</summary>
    public ReliabilityBin[] WholeRun { get; set; } = [];

    /// <summary>Multiclass: each class's reliability bins over the whole run, one against the rest; empty for binary.</summary>
    public List<(string Class, ReliabilityBin[] Bins)> ClassBins { get; } = [];

    /// <summary>Multiclass: labels by observed class (rows) and predicted top class (columns), K × K flattened; null for binary.</summary>
    public long[]? Confusion { get; set; }

    /// <summary>The model over the whole run.</summary>
    public CalibrationSnapshot Total { get; set; } = CalibrationSnapshot.Empty;

    /// <summary>The class-prior baseline over the whole run.</summary>
    public CalibrationSnapshot PriorTotal { get; set; } = CalibrationSnapshot.Empty;

    /// <summary>With recalibration on: the served probabilities over the whole run; null otherwise.</summary>
    public CalibrationSnapshot? ServedTotal { get; set; }

    /// <summary>With recalibration on: each model's fitted correction at the end (key, a, b).</summary>
    public List<(string Key, double Intercept, double Slope)> Recalibrations { get; } = [];

    /// <summary>For a configuration after the first: its test against the champion; null otherwise.</summary>
    public Core.Challengers.ChallengerJudge? Challenger { get; set; }

    /// <summary>This configuration as a challenger: its paired log-loss and the champion's across the run; null otherwise.</summary>
    public ChallengerCurve? ChallengerCurve { get; set; }

    /// <summary>Whole-run counts.</summary>
    public ScoringCounters Counters { get; set; } = new();

    /// <summary>Predictions dropped unlabelled.</summary>
    public long ExpiredLabels { get; set; }

    /// <summary>Predictions still waiting for a label at the end.</summary>
    public long WaitingLabels { get; set; }

    /// <summary>Records rejected into the dead letters.</summary>
    public long DeadLetters { get; set; }

    /// <summary>Rules still raised at the end.</summary>
    public List<string> OpenAlerts { get; } = [];

    /// <summary>Wall-clock duration of the replay.</summary>
    public TimeSpan Elapsed { get; set; }

    /// <summary>Log-loss skill over the prior, 1 − model / prior; NaN when undefined.</summary>
    public double Skill => PriorTotal.LogLoss > 0 ? 1 - Total.LogLoss / PriorTotal.LogLoss : double.NaN;
}
