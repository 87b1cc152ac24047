namespace Driftline.Core.Detectors;

/// <summary>
/// A change detector on a stream of real values, such as the per-label log-loss: it reads one
/// value at a time and says whether the stream's mean has moved.
/// </summary>
internal abstract class ChangeDetector : IChangeDetector
{
    /// <inheritdoc/>
    public DetectorState State { get; protected set; } = DetectorState.NotReady;

    /// <inheritdoc/>
    public long Count { get; protected set; }

    /// <inheritdoc/>
    public long Detections { get; protected set; }

    /// <summary>Reads the next value and returns the new <see cref="State"/>.</summary>
    /// <param name="value">Any finite number.</param>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="value"/> is NaN or infinite; the detector is unchanged.</exception>
    public abstract DetectorState Add(double value);

    /// <inheritdoc/>
    public abstract void Reset();

    /// <summary>An independent copy that continues exactly as the original would.</summary>
    public abstract ChangeDetector Copy();

    /// <inheritdoc/>
    IChangeDetector IChangeDetector.Copy() => Copy();

    /// <summary>The detector's whole state, for a snapshot; <see cref="Import"/> continues from it exactly.</summary>
    public Snapshots.DetectorSnapshot Export() => new() { Count = Count, Detections = Detections, State = State, Values = ExportValues() };

    /// <summary>Continues from a state produced by <see cref="Export"/> on a detector with the same settings.</summary>
    /// <exception cref="ArgumentException">The saved values do not fit this kind of detector.</exception>
    public void Import(Snapshots.DetectorSnapshot saved)
    {
        ArgumentNullException.ThrowIfNull(saved);
        ImportValues(saved.Values);
        Count = saved.Count;
        Detections = saved.Detections;
        State = saved.State;
    }

    /// <summary>The running values particular to the detector.</summary>
    protected abstract double[] ExportValues();

    /// <summary>Restores what <see cref="ExportValues"/> gave.</summary>
    protected abstract void ImportValues(double[] values);

    /// <summary>The check every <see cref="Add"/> starts with.</summary>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="value"/> is NaN or infinite.</exception>
    protected static void RequireFinite(double value)
    {
        if (!double.IsFinite(value))
        {
            throw new ArgumentOutOfRangeException(nameof(value), value, "A detector value must be a finite number.");
        }
    }
}
