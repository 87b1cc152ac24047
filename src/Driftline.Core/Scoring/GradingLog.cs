namespace Driftline.Core.Scoring;

/// <summary>
/// The grading work of one batch, in stream order, handed from the scoring stage to the
/// grading stage: each graded label with its probabilities and the engine's position when it
/// was scored, and the position after each prediction (where the report samples). Buffers
/// are kept across batches, so a warm pipeline allocates nothing here.
/// </summary>
/// <remarks>
/// Only what the scoring thread no longer needs goes here: the windows, totals, alert rules
/// and segments. The class prior and the label count stay with the scoring thread, which
/// predicts from them.
/// </remarks>
internal sealed class GradingLog
{
    private Entry[] _labels = new Entry[256];
    private double[] _values = new double[1024];
    private EnginePosition[] _ticks = new EnginePosition[4096];
    private int _valueCount;

    /// <summary>Labels recorded.</summary>
    public int LabelCount { get; private set; }

    /// <summary>Predictions recorded.</summary>
    public int TickCount { get; private set; }

    /// <summary>One graded label.</summary>
    /// <param name="Ticks">Predictions recorded before this label.</param>
    /// <param name="Offset">Where its probabilities start in the value buffer (p, then the prior's).</param>
    /// <param name="Outputs">Probabilities per side.</param>
    /// <param name="Y">The label.</param>
    /// <param name="Id">The event's id.</param>
    /// <param name="TimeTicks">The label's time.</param>
    /// <param name="Segment">The event's segment, or null.</param>
    /// <param name="Position">The engine's position with this label counted.</param>
    internal readonly record struct Entry(int Ticks, int Offset, int Outputs, int Y, string Id, long TimeTicks, string? Segment, EnginePosition Position);

    /// <summary>Empties the log, keeping its buffers.</summary>
    public void Clear()
    {
        LabelCount = 0;
        TickCount = 0;
        _valueCount = 0;
    }

    /// <summary>Records the position after one prediction.</summary>
    public void AddTick(in EnginePosition position)
    {
        if (TickCount == _ticks.Length)
        {
            Array.Resize(ref _ticks, TickCount * 2);
        }
        _ticks[TickCount++] = position;
    }

    /// <summary>Records one graded label.</summary>
    public void AddLabel(ReadOnlySpan<double> p, ReadOnlySpan<double> priorP, int y, string id, long timeTicks, string? segment, in EnginePosition position)
    {
        if (LabelCount == _labels.Length)
        {
            Array.Resize(ref _labels, LabelCount * 2);
        }
        int need = _valueCount + p.Length + priorP.Length;
        if (need > _values.Length)
        {
            Array.Resize(ref _values, Math.Max(need, _values.Length * 2));
        }
        p.CopyTo(_values.AsSpan(_valueCount));
        priorP.CopyTo(_values.AsSpan(_valueCount + p.Length));
        _labels[LabelCount++] = new Entry(TickCount, _valueCount, p.Length, y, id, timeTicks, segment, position);
        _valueCount = need;
    }

    /// <summary>The labels, in order.</summary>
    public ReadOnlySpan<Entry> Labels => _labels.AsSpan(0, LabelCount);

    /// <summary>The positions after each prediction, in order.</summary>
    public ReadOnlySpan<EnginePosition> Ticks => _ticks.AsSpan(0, TickCount);

    /// <summary>The model's probabilities of <paramref name="entry"/>.</summary>
    public ReadOnlySpan<double> P(in Entry entry) => _values.AsSpan(entry.Offset, entry.Outputs);

    /// <summary>The class prior's probabilities of <paramref name="entry"/>.</summary>
    public ReadOnlySpan<double> PriorP(in Entry entry) => _values.AsSpan(entry.Offset + entry.Outputs, entry.Outputs);
}
