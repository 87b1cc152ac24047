using Driftline.Core.Metrics;

namespace Driftline.Core.Tests.Metrics;

public sealed class TimeWindowContractTests : CalibrationMeasuresContract
{
    private protected override ICalibrationMeasures Create(int room, int bins = 10) =>
        new Adapter(new TimeWindow(TimeSpan.FromHours(1), room, bins), new DateTimeOffset(2026, 3, 4, 18, 0, 0, TimeSpan.Zero));

    /// <summary>Each add one second after the last, well inside the hour, so nothing ages out.</summary>
    private sealed class Adapter(TimeWindow window, DateTimeOffset next) : ICalibrationMeasures
    {
        public int Bins => window.Bins;

        public CalibrationSnapshot Current => window.Current;

        public void Add(double p, int y)
        {
            window.Add(next, p, y);
            next = next.AddSeconds(1);
        }

        public void CopyBins(Span<ReliabilityBin> destination) => window.CopyBins(destination);

        public ICalibrationMeasures Copy() => new Adapter(window.Copy(), next);
    }
}
