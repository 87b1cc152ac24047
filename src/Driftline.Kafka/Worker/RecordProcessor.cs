using System.Globalization;
using Driftline.Core.Events;
using Driftline.Core.Options;
using Driftline.Core.Scoring;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Parses one consumed record and runs it through its partition's engine; whatever the
/// engine refuses (or a label that grades nothing) goes to the dead-letter topic, so bad
/// input never stops the worker and never touches a model. One per partition (it reuses
/// its parse buffers).
/// </summary>
internal sealed class RecordProcessor(KafkaOutputs outputs, OutputCounts stats, InputOptions input)
{
    /// <summary>The champion's challengers, which see every parsed record after it (their outcomes are theirs: only the champion's dead-letters a record); null without.</summary>
    public Driftline.Core.Challengers.ChallengerPanel? Panel { get; set; }

    private readonly EventParser _parser = new() { MaxTextBytes = input.MaxTextBytes };
    private readonly ParsedRecord _record = new();

    /// <summary>Processes <paramref name="record"/> from <paramref name="topic"/>; returns true when it graded a prediction.</summary>
    public bool Process(ScoringEngine engine, in BufferedRecord record, string topic, int partition)
    {
        // Segments are named by the engine's configuration; the reference compare is cheap.
        if (!ReferenceEquals(_parser.SegmentFeature, engine.Options.Monitor.SegmentBy))
        {
            _parser.SegmentFeature = engine.Options.Monitor.SegmentBy;
        }
        if (!ReferenceEquals(_parser.Classes, engine.Options.Model.Classes))
        {
            _parser.Classes = engine.Options.Model.Classes;
        }
        var value = record.Value.AsSpan();
        if (value.Length > input.MaxLineBytes)
        {
            // The client has the message in memory already; refusing it keeps it off the parser and the outputs.
            outputs.DeadLetter(string.Create(CultureInfo.InvariantCulture, $"message of {value.Length:N0} bytes exceeds Input:MaxLineBytes ({input.MaxLineBytes:N0})"),
                topic, partition, record.Offset, record.Key, value);
            return false;
        }
        if (value.Trim(" \t\r\n"u8).IsEmpty)
        {
            outputs.DeadLetter("empty message", topic, partition, record.Offset, record.Key, value);
            return false;
        }
        if (!_parser.TryParse(value, _record, out string? error))
        {
            outputs.DeadLetter(error!, topic, partition, record.Offset, record.Key, value);
            return false;
        }
        var outcome = engine.Process(_record);
        if (Panel is { } panel)
        {
            foreach (var challenger in panel.Challengers)
            {
                challenger.Engine.Process(_record);
            }
            // Every engine has taken the record: a challenger declared better on it may now serve.
            panel.Settle();
        }
        switch (outcome)
        {
            case StepOutcome.ScoredAndLearned:
            case StepOutcome.LateLabelJoined:
                stats.LabelsJoined++;
                return true;
            case StepOutcome.ProbabilityRecorded:
                return _record.HasLabel;
            case StepOutcome.Rejected:
                outputs.DeadLetter(engine.RejectReason!, topic, partition, record.Offset, record.Key, value);
                return false;
            case StepOutcome.UnknownLabel:
                outputs.DeadLetter("label for an id with no pending prediction (never scored on this partition, label earlier than its event, or dropped after Labels:MaxAge or Labels:MaxPending)", topic, partition, record.Offset, record.Key, value);
                return false;
            case StepOutcome.DuplicateLabel:
                outputs.DeadLetter("second label for a prediction that was already graded", topic, partition, record.Offset, record.Key, value);
                return false;
            default:
                return false;
        }
    }
}
