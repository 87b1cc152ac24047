using System.Globalization;
using System.Text;

namespace Driftline.Core.Fitting;

/// <summary>
/// A plain-text report of a <see cref="CrossValidationResult"/>: one line per held-out fold,
/// then mean ± sd over the folds, the spread of the repetitions' means, the class prior's
/// figures and the skill over it. Invariant culture, so output is the same on every machine.
/// </summary>
internal static class CrossValidationReport
{
    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    private static readonly (string Name, Func<HeldOutScores, double> Figure)[] Figures =
    [
        ("log-loss", s => s.LogLoss),
        ("Brier", s => s.Brier),
        ("ECE", s => s.Ece),
        ("AUC", s => s.Auc),
        ("accuracy", s => s.Accuracy),
    ];

    /// <summary>Renders the report, each line ending in a newline.</summary>
    public static string Format(CrossValidationResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        var text = new StringBuilder();
        text.Append(C, $"Cross-validation: {result.Folds}-fold stratified, {result.Repeats} repetition{(result.Repeats == 1 ? "" : "s")}, seed {result.Seed}; ")
            .Append("held-out figures of the model and of the class prior of each training fold, (n_k + 1) / (N + K).\n");
        var rows = new List<string[]>
        {
            new[] { "repetition", "fold", "rows" }.Concat(Figures.Select(f => f.Name)).Concat(["prior log-loss", "prior Brier", "prior ECE", "prior accuracy"]).ToArray(),
        };
        foreach (CrossValidationFold fold in result.PerFold)
        {
            rows.Add(new[] { (fold.Repeat + 1).ToString(C), (fold.Fold + 1).ToString(C), fold.Count.ToString("N0", C) }
                .Concat(Figures.Select(f => Number(f.Figure(fold.Model))))
                .Concat([Number(fold.Prior.LogLoss), Number(fold.Prior.Brier), Number(fold.Prior.Ece), Number(fold.Prior.Accuracy)])
                .ToArray());
        }

        int[] widths = Enumerable.Range(0, rows[0].Length).Select(c => rows.Max(r => r[c].Length)).ToArray();
        foreach (string[] row in rows)
        {
            text.Append(string.Join("  ", row.Select((cell, c) => cell.PadLeft(widths[c])))).Append('\n');
        }

        text.Append('\n');
        var summary = new List<string[]> { new[] { "figure", "model mean ± sd", "sd of repetition means", "prior mean ± sd", "skill (1 − model/prior)" } };
        foreach ((string name, Func<HeldOutScores, double> figure) in Figures)
        {
            MetricSummary model = result.Model(figure);
            MetricSummary prior = result.Prior(figure);
            bool isLoss = name is "log-loss" or "Brier";
            summary.Add([name, $"{Number(model.Mean)} ± {Number(model.Sd)}", Number(model.SdOfRepeatMeans),
                $"{Number(prior.Mean)} ± {Number(prior.Sd)}", isLoss ? Number(result.Skill(figure)) : "–"]);
        }

        int[] summaryWidths = Enumerable.Range(0, summary[0].Length).Select(c => summary.Max(r => r[c].Length)).ToArray();
        foreach (string[] row in summary)
        {
            text.Append(row[0].PadRight(summaryWidths[0]));
            for (int c = 1; c < row.Length; c++)
            {
                text.Append("  ").Append(row[c].PadLeft(summaryWidths[c]));
            }

            text.Append('\n');
        }

        return text.ToString();
    }

    private static string Number(double value) => double.IsNaN(value) ? "n/a" : value.ToString("0.0000", C);
}
