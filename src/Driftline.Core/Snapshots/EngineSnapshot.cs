using System.Text.Json.Serialization;
using Driftline.Core.Features;
using Driftline.Core.Learning;
using Driftline.Core.Metrics;
using Driftline.Core.Options;
using Driftline.Core.Scoring;

namespace Driftline.Core.Snapshots;

/// <summary>
/// Everything the core holds, in a plain form that serialises to JSON: the models, the
/// predictions still waiting for labels, the windows, the alert states and the counts. A
/// snapshot restored into a new engine continues exactly as the saved one would have.
/// </summary>
internal sealed class EngineSnapshot
{
    /// <summary>Marks the file as a Driftline snapshot; set by <see cref="SnapshotCodec.Write"/>, checked on read.</summary>
    public string? Format { get; set; }

    /// <summary>Version of this layout; readers refuse versions they do not know.</summary>
    public int FormatVersion { get; set; }

    /// <summary>The options the engine ran with.</summary>
    public DriftlineOptions Options { get; set; } = new();

    /// <summary>One entry per key.</summary>
    public List<ModelSnapshot> Models { get; set; } = [];

    /// <summary>Predictions held for late labels, oldest first (decoded from the copy <see cref="PendingEntries"/> holds, when it holds one).</summary>
    [JsonIgnore]
    public List<PendingSnapshot> Pending
    {
        get => PendingEntries?.List!;
        set => PendingEntries = value is null ? null : new PendingEntries(value);
    }

    /// <summary>
    /// What <see cref="Pending"/> is made from and written from: the list, or the pending
    /// store's records copied when the snapshot was taken; null only in a damaged file.
    /// </summary>
    [JsonPropertyName("pending")]
    public PendingEntries? PendingEntries { get; set; } = new([]);

    /// <summary>
    /// Once the snapshot has been written (a checkpoint), gives the arrays of the copied records
    /// back to the engine for its next snapshot; <see cref="Pending"/> and
    /// <see cref="InlineLabelled"/> may not be read after.
    /// </summary>
    public void ReleaseCopies()
    {
        PendingEntries?.Release();
        InlineLabelledEntries?.Release();
    }

    /// <summary>
    /// Ids of the latest events that came with their label, oldest first, so a late label for
    /// one after a restore is still a duplicate; null in older snapshots (none remembered).
    /// Decoded from the copy <see cref="InlineLabelledEntries"/> holds, when it holds one.
    /// </summary>
    [JsonIgnore]
    public List<string>? InlineLabelled
    {
        get => InlineLabelledEntries?.List;
        set => InlineLabelledEntries = value is null ? null : new RecentIdEntries(value);
    }

    /// <summary>What <see cref="InlineLabelled"/> is made from and written from: the list, or the ids' keys copied when the snapshot was taken.</summary>
    [JsonPropertyName("inline_labelled")]
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public RecentIdEntries? InlineLabelledEntries { get; set; }

    /// <summary>Predictions that left the store unlabelled.</summary>
    public long ExpiredLabels { get; set; }

    /// <summary>Window contents per window size: the model's and the baseline's graded predictions, oldest first.</summary>
    public List<WindowSnapshot> Windows { get; set; } = [];

    /// <summary>Time windows per span: the model's and the baseline's timed predictions.</summary>
    public List<TimeWindowSnapshot> TimeWindows { get; set; } = [];

    /// <summary>Whole-run totals of the model.</summary>
    public CalibrationTotalsState? Totals { get; set; }

    /// <summary>Whole-run totals of the baseline.</summary>
    public CalibrationTotalsState? PriorTotals { get; set; }

    /// <summary>Alert rule states by name.</summary>
    public List<RuleSnapshot> Rules { get; set; } = [];

    /// <summary>
    /// Multiclass: each class's one-against-the-rest channel (windows, totals, rules), in the
    /// order of Model:Classes; the fields above then hold the whole model's. Null for binary.
    /// </summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public List<ChannelSnapshot>? Classes { get; set; }

    /// <summary>Multiclass: the top-label totals (confidence against accuracy); null for binary.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public CalibrationTotalsState? TopLabel { get; set; }

    /// <summary>Multiclass: the top-label rolling window; null for binary.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public GradedPrediction[]? TopLabelWindow { get; set; }

    /// <summary>Multiclass: labels by observed and predicted top class, K × K row by row; null for binary.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public long[]? Confusion { get; set; }

    /// <summary>
    /// The per-segment windows of <c>Monitor:SegmentBy</c>, in the order the segments first
    /// appeared; null when segments are not tracked (or in an older snapshot: they start empty).
    /// </summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public List<SegmentSnapshot>? Segments { get; set; }

    /// <summary>Whole-run counts.</summary>
    public ScoringCounters Counters { get; set; } = new();

    /// <summary>With recalibration on: the served probabilities' whole-run totals; null otherwise.</summary>
    public CalibrationTotalsState? ServedTotals { get; set; }

    /// <summary>With recalibration on: the served probabilities' report window, oldest first; null otherwise.</summary>
    public GradedPrediction[]? ServedWindow { get; set; }

    /// <summary>
    /// Multiclass with recalibration on: the served top label's totals, then each class's against
    /// the rest (<see cref="ServedTotals"/> being the true class's); null otherwise.
    /// </summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public List<CalibrationTotalsState>? ServedClassTotals { get; set; }

    /// <summary>Multiclass with recalibration on: the windows in the order of <see cref="ServedClassTotals"/>; null otherwise.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public List<GradedPrediction[]>? ServedClassWindows { get; set; }

    /// <summary>Latest event time seen (UTC ticks), or no time.</summary>
    public long ClockTicks { get; set; }

    /// <summary>
    /// Text behind feature hashes (hash as a decimal string → <c>name</c> or <c>name=value</c>),
    /// for display only; null when none were recorded. Restoring ignores it.
    /// </summary>
    public Dictionary<string, string>? FeatureNames { get; set; }

    /// <summary>How <c>fit</c> made this model; null for a model that learned online (and in older files).</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public BatchFitSnapshot? BatchFit { get; set; }

    /// <summary>Value of <see cref="Format"/>.</summary>
    public const string FormatName = "driftline-state";

    /// <summary>Value of <see cref="FormatVersion"/> written by this build.</summary>
    public const int CurrentVersion = 1;
}

/// <summary>One key's model.</summary>
internal sealed class ModelSnapshot
{
    /// <summary>The key.</summary>
    public string Key { get; set; } = "";

    /// <summary>The learner's statistics.</summary>
    public LearnerState Learner { get; set; } = new();

    /// <summary>Scaling statistics of numeric features.</summary>
    public List<NumericStats> Scaling { get; set; } = [];

    /// <summary>Labels the prior has seen.</summary>
    public long PriorCount { get; set; }

    /// <summary>Positive labels the prior has seen.</summary>
    public long PriorPositives { get; set; }

    /// <summary>Multiclass: labels of each class the prior has seen, in the order of Model:Classes; null for binary.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public long[]? PriorClassCounts { get; set; }

    /// <summary>Events scored.</summary>
    public long Scored { get; set; }

    /// <summary>The live recalibration's fit, when <c>Recalibration:Mode</c> is not Off; else null.</summary>
    public Recalibration.RecalibrationState? Recalibration { get; set; }
}

/// <summary>
/// A prediction waiting for its label. A value, not an object: a snapshot holds one per waiting
/// or graded entry (tens of thousands a partition), in one array.
/// </summary>
internal struct PendingSnapshot
{
    /// <summary>An entry with an empty id (what the JSON reader starts from).</summary>
    public PendingSnapshot()
    {
    }

    /// <summary>Event id.</summary>
    public string Id { get; set; } = "";

    /// <summary>Index into <see cref="EngineSnapshot.Models"/>.</summary>
    public int Model { get; set; }

    /// <summary>Event time (UTC ticks).</summary>
    public long TimeTicks { get; set; }

    /// <summary>Probability emitted (left out, as 0, once graded).</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingDefault)]
    public double P { get; set; }

    /// <summary>Baseline probability at the same moment (left out, as 0, once graded).</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingDefault)]
    public double PriorP { get; set; }

    /// <summary>With recalibration on: the probability served (binary); null otherwise.</summary>
    public double? Served { get; set; }

    /// <summary>Multiclass: the class probabilities emitted (null for binary or once labelled).</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public double[]? ClassP { get; set; }

    /// <summary>Multiclass: the class prior's probabilities at the same moment.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public double[]? ClassPriorP { get; set; }

    /// <summary>Multiclass with recalibration on: the class probabilities served (null otherwise or once labelled).</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public double[]? ServedClassP { get; set; }

    /// <summary>Already graded (kept to recognise duplicates).</summary>
    public bool Labelled { get; set; }

    /// <summary>Feature slots; null once graded (a graded entry only recognises a duplicate label).</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public int[]? Slots { get; set; }

    /// <summary>Feature values; null once graded.</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public double[]? Values { get; set; }

    /// <summary>The event's segment (<c>Monitor:SegmentBy</c>), or null.</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public string? Segment { get; set; }
}

/// <summary>One segment's rolling window.</summary>
internal sealed class SegmentSnapshot
{
    /// <summary>The segment's value (or the catch-all for segments beyond <c>Monitor:MaxSegments</c>).</summary>
    public string Name { get; set; } = "";

    /// <summary>Its graded predictions, oldest first.</summary>
    public GradedPrediction[] Contents { get; set; } = [];
}

/// <summary>The contents of one window size.</summary>
internal sealed class WindowSnapshot
{
    /// <summary>Window size in labels.</summary>
    public int Size { get; set; }

    /// <summary>The model's graded predictions, oldest first.</summary>
    public GradedPrediction[] Model { get; set; } = [];

    /// <summary>The baseline's graded predictions, oldest first.</summary>
    public GradedPrediction[] Prior { get; set; } = [];
}

/// <summary>The contents of one time window.</summary>
internal sealed class TimeWindowSnapshot
{
    /// <summary>Span of event time held.</summary>
    public TimeSpan Span { get; set; }

    /// <summary>Most labels held.</summary>
    public int MaxCount { get; set; }

    /// <summary>Latest event time seen by the model's window.</summary>
    public DateTimeOffset? ModelLatest { get; set; }

    /// <summary>Latest event time seen by the baseline's window.</summary>
    public DateTimeOffset? PriorLatest { get; set; }

    /// <summary>The model's timed predictions.</summary>
    public TimedPrediction[] Model { get; set; } = [];

    /// <summary>The baseline's timed predictions.</summary>
    public TimedPrediction[] Prior { get; set; } = [];
}

/// <summary>One alert rule's state.</summary>
internal sealed class RuleSnapshot
{
    /// <summary>Rule name.</summary>
    public string Name { get; set; } = "";

    /// <summary>Raised now.</summary>
    public bool Raised { get; set; }

    /// <summary>Times raised.</summary>
    public long RaisedCount { get; set; }

    /// <summary>Reference value (NaN until captured).</summary>
    public double Reference { get; set; } = double.NaN;

    /// <summary>Labels the rule has seen.</summary>
    public long Seen { get; set; }

    /// <summary>When the rule last cleared, in labels seen.</summary>
    public long ClearedAt { get; set; } = long.MinValue / 2;

    /// <summary>The sequential calibration test's CUSUMs (CalibrationDrift rules), else null.</summary>
    public double[]? Cusums { get; set; }

    /// <summary>Index of the alternative that raised the test, −1 when not raised.</summary>
    public int CusumRaised { get; set; } = -1;

    /// <summary>Labels the test has read.</summary>
    public long CusumCount { get; set; }

    /// <summary>Alarms the test has raised.</summary>
    public long CusumDetections { get; set; }

    /// <summary>Alarms the test has cleared.</summary>
    public long CusumClears { get; set; }

    /// <summary>The test's state.</summary>
    public Detectors.DetectorState CusumState { get; set; }

    /// <summary>State of the rule's Page–Hinkley or ADWIN detector; null for other rules (or an older snapshot, whose detector then starts empty).</summary>
    public DetectorSnapshot? LossDetector { get; set; }

    /// <summary>The rule's AUC window, oldest first; null for other rules.</summary>
    public Metrics.GradedPrediction[]? AucWindow { get; set; }

    /// <summary>Label count at the loss detector's last signal.</summary>
    public long LastSignal { get; set; } = long.MinValue / 2;

    /// <summary>The Hosmer–Lemeshow p-value held between refreshes (NaN: none yet).</summary>
    public double HeldHosmerLemeshow { get; set; } = double.NaN;

    /// <summary>Labels in a row past Clear while raised (the clear hold); 0 in older snapshots.</summary>
    public long ClearStreak { get; set; }
}
