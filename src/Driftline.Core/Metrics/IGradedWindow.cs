namespace Driftline.Core.Metrics;

/// <summary>
/// What an alert rule reads from a rolling window, whether it holds the last N labels
/// (<see cref="CalibrationWindow"/>) or the last T of event time (<see cref="TimeWindow"/>).
/// </summary>
internal interface IGradedWindow
{
    /// <summary>Labels held now.</summary>
    int Count { get; }

    /// <summary>Most labels the window can hold.</summary>
    int Capacity { get; }

    /// <summary>Number of reliability bins.</summary>
    int Bins { get; }

    /// <summary>All measures, O(bins); not ready when empty.</summary>
    CalibrationSnapshot Current { get; }

    /// <summary>Mean log-loss, O(1); NaN when empty.</summary>
    double LogLoss { get; }

    /// <summary>Mean p − mean y, O(1); NaN when empty.</summary>
    double CalibrationInTheLarge { get; }

    /// <summary>Calibration-in-the-large in standard errors, O(1); NaN when empty.</summary>
    double CalibrationZ { get; }

    /// <summary>Copies the reliability bins.</summary>
    void CopyBins(Span<ReliabilityBin> destination);

    /// <summary>The graded predictions held (O(window), for on-demand statistics).</summary>
    GradedPrediction[] Contents();
}
