using Driftline.Core.Metrics;

namespace Driftline.Core.Tests.Metrics;

public sealed class CalibrationWindowContractTests : CalibrationMeasuresContract
{
    private protected override ICalibrationMeasures Create(int room, int bins = 10) => new Adapter(new CalibrationWindow(room, bins));

    private sealed class Adapter(CalibrationWindow window) : ICalibrationMeasures
    {
        public int Bins => window.Bins;

        public CalibrationSnapshot Current => window.Current;

        public void Add(double p, int y) => window.Add(p, y);

        public void CopyBins(Span<ReliabilityBin> destination) => window.CopyBins(destination);

        public ICalibrationMeasures Copy() => new Adapter(window.Copy());
    }
}
