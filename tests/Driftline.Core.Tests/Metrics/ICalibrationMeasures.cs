using Driftline.Core.Metrics;

namespace Driftline.Core.Tests.Metrics;

/// <summary>What the contract suite needs of a calibration accumulator, so every kind reruns it.</summary>
internal interface ICalibrationMeasures
{
    int Bins { get; }

    CalibrationSnapshot Current { get; }

    void Add(double p, int y);

    void CopyBins(Span<ReliabilityBin> destination);

    ICalibrationMeasures Copy();
}
