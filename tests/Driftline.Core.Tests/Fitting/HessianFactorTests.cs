using Driftline.Core.Fitting;
using MathNet.Numerics.LinearAlgebra;
using Xunit;

namespace Driftline.Core.Tests.Fitting;

public sealed class HessianFactorTests
{
    [Fact]
    public void TryFactor_PositiveDefinite_SolvesTheSystem()
    {
        Matrix<double> matrix = Matrix<double>.Build.DenseOfArray(new double[,] { { 4, 2 }, { 2, 3 } });

        var factor = HessianFactor.TryFactor(matrix, out int column);

        Assert.NotNull(factor);
        Assert.Equal(-1, column);

        // 4x + 2y = 8, 2x + 3y = 8 → x = 1, y = 2.
        Vector<double> solution = factor.Solve(Vector<double>.Build.Dense([8.0, 8.0]));
        Assert.Equal(1.0, solution[0], 1e-14);
        Assert.Equal(2.0, solution[1], 1e-14);
    }

    [Fact]
    public void TryFactor_ExactlySingular_NamesTheDependentColumn()
    {
        // Column 2 equals column 0 plus column 1; columns 0 and 1 are independent.
        Matrix<double> design = Matrix<double>.Build.DenseOfArray(new double[,] { { 1, 0, 1 }, { 1, 1, 2 }, { 1, 2, 3 }, { 1, 5, 6 } });
        Matrix<double> gram = design.TransposeThisAndMultiply(design);

        var factor = HessianFactor.TryFactor(gram, out int column);

        Assert.Null(factor);
        Assert.Equal(2, column);
    }

    [Fact]
    public void TryFactor_CollinearWithinRounding_NamesTheColumn()
    {
        // The second column differs from the first by 1e−9 of itself: a positive pivot, but
        // about 1e−18 of the diagonal, far below the 1e−12 that a solve can still use.
        Matrix<double> design = Matrix<double>.Build.DenseOfArray(new double[,] { { 1, 1 + 1e-9 }, { 2, 2 }, { 3, 3 } });
        Matrix<double> gram = design.TransposeThisAndMultiply(design);

        Assert.Null(HessianFactor.TryFactor(gram, out int column));
        Assert.Equal(1, column);
    }

    [Fact]
    public void TryFactor_ZeroColumn_NamesIt()
    {
        Matrix<double> matrix = Matrix<double>.Build.DenseOfArray(new double[,] { { 2, 0, 1 }, { 0, 0, 0 }, { 1, 0, 2 } });

        Assert.Null(HessianFactor.TryFactor(matrix, out int column));
        Assert.Equal(1, column);
    }
}
