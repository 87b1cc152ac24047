using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.LinearAlgebra.Factorization;

namespace Driftline.Core.Fitting;

/// <summary>
/// Cholesky factorization of a Newton system's matrix (the negative Hessian, X'WX plus any
/// ridge) that also says which column made it singular when it is.
/// </summary>
internal static class HessianFactor
{
    /// <summary>
    /// The smallest accepted relative pivot. Pivot j of the Cholesky factor, squared and
    /// divided by the diagonal entry H[j, j], is the share of column j's weighted size that
    /// the earlier columns do not explain (1 − R² of column j on columns 0..j−1). Below
    /// 1e−12 fewer than about four of a double's sixteen digits survive in the solve, so the
    /// column is treated as a linear combination of the earlier ones.
    /// </summary>
    public const double MinRelativePivot = 1e-12;

    /// <summary>
    /// Factors <paramref name="matrix"/> if it is numerically positive definite.
    /// </summary>
    /// <param name="matrix">A symmetric square matrix; only its lower triangle is read.</param>
    /// <param name="singularColumn">
    /// −1 on success; otherwise the first column whose relative pivot is below
    /// <see cref="MinRelativePivot"/>, is zero, negative or not a number.
    /// </param>
    /// <returns>The factorization, or null when the matrix is singular or not positive definite.</returns>
    public static Cholesky<double>? TryFactor(Matrix<double> matrix, out int singularColumn)
    {
        ArgumentNullException.ThrowIfNull(matrix);

        Cholesky<double>? factor = TryCholesky(matrix);
        if (factor is not null)
        {
            singularColumn = FirstSmallPivot(matrix, factor.Factor, matrix.RowCount);
            return singularColumn < 0 ? factor : null;
        }

        // MathNet reports only that the matrix is not positive definite, not where. The leading
        // k×k block has the same first k pivots as the whole matrix, so "the leading block is
        // fine" holds for every k up to the culprit and for none after: bisect on k.
        int good = 0;
        int bad = matrix.RowCount;
        while (bad - good > 1)
        {
            int middle = good + ((bad - good) / 2);
            if (LeadingBlockIsFine(matrix, middle))
            {
                good = middle;
            }
            else
            {
                bad = middle;
            }
        }

        singularColumn = bad - 1;
        return null;
    }

    private static bool LeadingBlockIsFine(Matrix<double> matrix, int size)
    {
        Matrix<double> block = matrix.SubMatrix(0, size, 0, size);
        Cholesky<double>? factor = TryCholesky(block);
        return factor is not null && FirstSmallPivot(block, factor.Factor, size) < 0;
    }

    private static int FirstSmallPivot(Matrix<double> matrix, Matrix<double> lower, int size)
    {
        for (int j = 0; j < size; j++)
        {
            double diagonal = matrix[j, j];
            double pivot = lower[j, j];

            // Written so that a NaN pivot or diagonal counts as singular.
            if (!(diagonal > 0) || !(pivot * pivot >= MinRelativePivot * diagonal))
            {
                return j;
            }
        }

        return -1;
    }

    private static Cholesky<double>? TryCholesky(Matrix<double> matrix)
    {
        try
        {
            return matrix.Cholesky();
        }
        catch (ArgumentException)
        {
            // MathNet's only signal for "not positive definite"; the caller turns it into a
            // named column and a message, so nothing is lost by catching it here.
            return null;
        }
    }
}
