using System.Globalization;
using System.Text;
using MathNet.Numerics.Distributions;

namespace Driftline.Core.Fitting;

/// <summary>
/// A plain-text table of a <see cref="LogisticFitResult"/>: per term the estimate, standard
/// error, Wald z and two-sided p-value, then the log-likelihoods, McFadden's pseudo-R² and
/// whether the fit converged. Numbers use the invariant culture, so output is the same on
/// every machine.
/// </summary>
internal sealed class FitReport
{
    private const string InterceptName = "intercept";

    private readonly LogisticFitResult _result;
    private readonly IReadOnlyList<string> _names;

    /// <summary>Prepares a report.</summary>
    /// <param name="result">The fit to report.</param>
    /// <param name="featureNames">One name per coefficient; default null names them x0, x1, ….</param>
    /// <exception cref="ArgumentException">The number of names differs from the number of coefficients.</exception>
    public FitReport(LogisticFitResult result, IReadOnlyList<string>? featureNames = null)
    {
        ArgumentNullException.ThrowIfNull(result);
        int count = result.Coefficients.Count;
        if (featureNames is not null && featureNames.Count != count)
        {
            throw new ArgumentException($"There are {featureNames.Count} feature names for {count} coefficients; give one name per feature.", nameof(featureNames));
        }

        _result = result;
        _names = featureNames ?? Enumerable.Range(0, count).Select(j => $"x{j}").ToArray();
    }

    /// <summary>
    /// The two-sided p-value of a Wald z under the standard normal, 2·Φ(−|z|); computed from
    /// the lower tail so that large |z| keep their digits instead of rounding 1 − Φ to 0.
    /// </summary>
    /// <param name="z">A z statistic; NaN gives NaN, ±∞ give 0.</param>
    /// <returns>A probability in [0, 1].</returns>
    public static double TwoSidedPValue(double z) =>
        double.IsNaN(z) ? double.NaN : 2.0 * Normal.CDF(0.0, 1.0, -Math.Abs(z));

    /// <summary>
    /// Renders the table: a header line, one right-aligned line per term (intercept first),
    /// a blank line and the summary lines, each ending in a newline.
    /// </summary>
    /// <returns>The report. Estimates below 0.001 in size are shown in exponent form so that
    /// small but real coefficients do not print as 0; p-values below 0.0001 print as "&lt;0.0001";
    /// NaN (no estimate, or a singular Hessian) prints as "n/a".</returns>
    public string Format()
    {
        var rows = TermRows();
        int[] widths = Enumerable.Range(0, rows[0].Length).Select(c => rows.Max(r => r[c].Length)).ToArray();
        var text = new StringBuilder();
        foreach (string[] row in rows)
        {
            // Names left-aligned, numbers right-aligned so their decimal points line up.
            text.Append(row[0].PadRight(widths[0]));
            for (int c = 1; c < row.Length; c++)
            {
                text.Append("  ").Append(row[c].PadLeft(widths[c]));
            }

            text.Append('\n');
        }

        text.Append('\n');
        var summary = SummaryLines();
        int labelWidth = summary.Max(s => s.Label.Length);
        foreach ((string label, string value) in summary)
        {
            text.Append(label.PadRight(labelWidth)).Append("  ").Append(value).Append('\n');
        }

        return text.ToString();
    }

    /// <summary>The table's cells: a header row, then one row per term (intercept first), formatted as in <see cref="Format"/>.</summary>
    public IReadOnlyList<string[]> TermRows()
    {
        var rows = new List<string[]> { new[] { "term", "estimate", "std error", "z", "p-value" } };
        rows.Add(TermRow(InterceptName, _result.Intercept, _result.InterceptStandardError, _result.InterceptZ));
        for (int j = 0; j < _result.Coefficients.Count; j++)
        {
            rows.Add(TermRow(_names[j], _result.Coefficients[j], _result.StandardErrors[j], _result.ZValues[j]));
        }
        return rows;
    }

    /// <summary>The lines under the table: log-likelihoods, pseudo-R², ridge when used, Newton steps, convergence.</summary>
    public IReadOnlyList<(string Label, string Value)> SummaryLines()
    {
        var summary = new List<(string Label, string Value)>
        {
            ("log-likelihood", Number(_result.LogLikelihood)),
            ("null log-likelihood", Number(_result.NullLogLikelihood)),
            ("pseudo R-squared (McFadden)", Number(_result.McFaddenPseudoRSquared)),
        };
        if (_result.Ridge > 0)
        {
            summary.Add(("ridge (L2)", _result.Ridge.ToString("G6", CultureInfo.InvariantCulture) + "; std errors from the penalized Hessian"));
        }

        summary.Add(("Newton steps", _result.Iterations.ToString(CultureInfo.InvariantCulture)));
        summary.Add(("converged", _result.Converged ? "yes" : "no: " + _result.Problem));
        return summary;
    }

    private static string[] TermRow(string name, double estimate, double standardError, double z) =>
        [name, Number(estimate), Number(standardError), Number(z), PValue(TwoSidedPValue(z))];

    /// <summary>A number as the table shows it: 4 decimals, exponent form below 0.001 or from 1e9, "n/a" for NaN.</summary>
    public static string Number(double value)
    {
        if (double.IsNaN(value))
        {
            return "n/a";
        }

        double size = Math.Abs(value);
        return size != 0 && (size < 1e-3 || size >= 1e9)
            ? value.ToString("0.000E+00", CultureInfo.InvariantCulture)
            : value.ToString("F4", CultureInfo.InvariantCulture);
    }

    /// <summary>A p-value as the table shows it: 4 decimals, "&lt;0.0001" below that, "n/a" for NaN.</summary>
    public static string PValue(double p) =>
        double.IsNaN(p) ? "n/a" : p < 1e-4 ? "<0.0001" : p.ToString("F4", CultureInfo.InvariantCulture);
}
