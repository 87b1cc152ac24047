using Driftline.Core.Metrics;

namespace Driftline.Core.Tests.Metrics;

public sealed class CalibrationTotalsContractTests : CalibrationMeasuresContract
{
    private protected override ICalibrationMeasures Create(int room, int bins = 10) => new Adapter(new CalibrationTotals(bins));

    private sealed class Adapter(CalibrationTotals totals) : ICalibrationMeasures
    {
        public int Bins => totals.Bins;

        public CalibrationSnapshot Current => totals.Current;

        public void Add(double p, int y) => totals.Add(p, y);

        public void CopyBins(Span<ReliabilityBin> destination) => totals.CopyBins(destination);

        public ICalibrationMeasures Copy() => new Adapter(totals.Copy());
    }
}
