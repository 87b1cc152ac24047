using System.Globalization;
using System.Text;

namespace Driftline.Core.Fitting;

/// <summary>
/// A plain-text report of a <see cref="MultinomialFitResult"/>: one table per class other than
/// the base (each class's log-odds against the base class), with estimate, standard error, Wald
/// z and two-sided p-value per term, then the log-likelihoods and McFadden's pseudo-R².
/// </summary>
internal static class MultinomialFitReport
{
    /// <summary>Renders the report, each line ending in a newline.</summary>
    /// <param name="fit">The fit.</param>
    /// <param name="classes">The class names, base first.</param>
    /// <param name="featureNames">One name per feature.</param>
    /// <param name="signs">Per feature, a factor (±1) turning a coefficient into the feature's own direction (hashed columns carry a sign).</param>
    public static string Format(MultinomialFitResult fit, IReadOnlyList<string> classes, IReadOnlyList<string> featureNames, IReadOnlyList<double> signs)
    {
        ArgumentNullException.ThrowIfNull(fit);
        ArgumentNullException.ThrowIfNull(classes);
        ArgumentNullException.ThrowIfNull(featureNames);
        ArgumentNullException.ThrowIfNull(signs);
        var text = new StringBuilder();
        for (int k = 1; k < fit.ClassCount; k++)
        {
            text.Append(CultureInfo.InvariantCulture, $"{Heading(classes, k)}\n");
            var rows = ClassRows(fit, featureNames, signs, k);
            int[] widths = Enumerable.Range(0, 5).Select(c => rows.Max(r => r[c].Length)).ToArray();
            foreach (string[] row in rows)
            {
                text.Append("  ").Append(row[0].PadRight(widths[0]));
                for (int c = 1; c < row.Length; c++)
                {
                    text.Append("  ").Append(row[c].PadLeft(widths[c]));
                }

                text.Append('\n');
            }

            text.Append('\n');
        }

        var summary = SummaryLines(fit);
        int labelWidth = summary.Max(s => s.Label.Length);
        foreach ((string label, string value) in summary)
        {
            text.Append(label.PadRight(labelWidth)).Append("  ").Append(value).Append('\n');
        }

        return text.ToString();
    }

    /// <summary>The line above class <paramref name="k"/>'s table.</summary>
    public static string Heading(IReadOnlyList<string> classes, int k) => $"class '{classes[k]}' against '{classes[0]}' (the base class):";

    /// <summary>Class <paramref name="k"/>'s table cells: a header row, then the intercept and one row per feature.</summary>
    public static IReadOnlyList<string[]> ClassRows(MultinomialFitResult fit, IReadOnlyList<string> featureNames, IReadOnlyList<double> signs, int k)
    {
        ArgumentNullException.ThrowIfNull(fit);
        var rows = new List<string[]> { new[] { "term", "estimate", "std error", "z", "p-value" } };
        rows.Add(Row("intercept", fit.Intercepts[k], fit.InterceptStandardErrors[k]));
        for (int j = 0; j < featureNames.Count; j++)
        {
            rows.Add(Row(featureNames[j], signs[j] * fit.Coefficients[k][j], fit.StandardErrors[k][j]));
        }
        return rows;
    }

    /// <summary>The lines under the tables: log-likelihoods, pseudo-R², ridge when used, Newton steps, convergence.</summary>
    public static IReadOnlyList<(string Label, string Value)> SummaryLines(MultinomialFitResult fit)
    {
        ArgumentNullException.ThrowIfNull(fit);
        var summary = new List<(string Label, string Value)>
        {
            ("log-likelihood", FitReport.Number(fit.LogLikelihood)),
            ("null log-likelihood", FitReport.Number(fit.NullLogLikelihood)),
            ("pseudo R-squared (McFadden)", FitReport.Number(fit.McFaddenPseudoRSquared)),
        };
        if (fit.Ridge > 0)
        {
            summary.Add(("ridge (L2)", fit.Ridge.ToString("G6", CultureInfo.InvariantCulture) + "; std errors from the penalized Hessian"));
        }

        summary.Add(("Newton steps", fit.Iterations.ToString(CultureInfo.InvariantCulture)));
        summary.Add(("converged", fit.Converged ? "yes" : "no: " + fit.Problem));
        return summary;
    }

    private static string[] Row(string name, double estimate, double standardError)
    {
        double z = estimate / standardError;
        return [name, FitReport.Number(estimate), FitReport.Number(standardError), FitReport.Number(z), FitReport.PValue(FitReport.TwoSidedPValue(z))];
    }
}
