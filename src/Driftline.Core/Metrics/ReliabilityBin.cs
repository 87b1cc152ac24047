namespace Driftline.Core.Metrics;

/// <summary>One bin of a reliability diagram.</summary>
/// <param name="Index">Bin number, 0 for the bin that starts at 0.</param>
/// <param name="Lower">Lower edge, <c>numpy.linspace(0, 1, bins + 1)[Index]</c> as a double.</param>
/// <param name="Upper">Upper edge, <c>numpy.linspace(0, 1, bins + 1)[Index + 1]</c>; exactly 1 for the last bin.</param>
/// <param name="Count">Graded predictions whose probability falls in the bin.</param>
/// <param name="MeanP">Mean predicted probability in the bin; <see cref="double.NaN"/> when <paramref name="Count"/> is 0.</param>
/// <param name="MeanY">Observed rate of positives in the bin; <see cref="double.NaN"/> when <paramref name="Count"/> is 0.</param>
/// <remarks>Which edge belongs to which bin is stated by whatever produced the bin (see <see cref="BinEdges"/>).</remarks>
internal readonly record struct ReliabilityBin(int Index, double Lower, double Upper, long Count, double MeanP, double MeanY);
