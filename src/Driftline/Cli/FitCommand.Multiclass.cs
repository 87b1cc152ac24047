using Driftline.Core.Features;
using Driftline.Core.Fitting;
using Driftline.Core.Learning;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Snapshots;
using Driftline.Output;

namespace Driftline.Cli;

/// <summary><c>fit</c> with <c>Model:Classes</c>: one joint multinomial fit of every class.</summary>
internal sealed partial class FitCommand
{
    private int FitClasses(DriftlineOptions options, Featurizer featurizer, FittedDesign d, string outPath, string? summaryPath,
        double ridge, CrossValidationRequest cv)
    {
        var classes = options.Model.Classes!;
        int k = classes.Count;
        var y = d.Labels.Select(l => (int)l).ToArray();
        var fit = MultinomialNewtonFit.Fit(d.Rows, y, k, ridge, d.Names);
        if (!fit.Converged)
        {
            string problem = fit.Problem!;
            // The fit numbers classes; the user knows them by name.
            for (int c = 0; c < k; c++)
            {
                problem = problem.Replace($"class {c} ", $"class '{classes[c]}' ", StringComparison.Ordinal)
                    .Replace($"of class {c})", $"of class '{classes[c]}')", StringComparison.Ordinal);
            }
            context.Error.WriteLine($"driftline: the fit did not converge: {problem}");
            return ExitCode.FitFailed;
        }

        CrossValidationResult? validated = null;
        if (cv.Folds > 0)
        {
            int rarest = Enumerable.Range(0, k).Min(c => y.Count(l => l == c));
            if (cv.Folds > rarest)
            {
                context.Error.WriteLine($"driftline: --folds {cv.Folds} is more than the {rarest:N0} events of the rarest class, so some folds would hold none; use at most {rarest:N0} folds");
                return ExitCode.FitFailed;
            }
            var assignments = CrossValidation.Assignments(y, cv.Folds, cv.Repeats, cv.Seed);
            validated = CrossValidation.Run(y, assignments, cv.Seed, MultinomialFoldFit.Step(d.Rows, y, k, ridge, d.Names), out string? why, k);
            if (validated is null)
            {
                context.Error.WriteLine($"driftline: cross-validation failed at {why}");
                return ExitCode.FitFailed;
            }
        }

        try
        {
            WriteClassModel(outPath, options, featurizer, fit, d, y, ridge, context.CreateOutput);
            if (summaryPath is not null)
            {
                var terms = Enumerable.Range(1, k - 1).Select(c =>
                {
                    var list = new List<(string, double, double)> { ("intercept", fit.Intercepts[c], fit.InterceptStandardErrors[c]) };
                    list.AddRange(d.Names.Select((n, j) => (n, d.Signs[j] * fit.Coefficients[c][j], fit.StandardErrors[c][j])));
                    return (classes[c], (IReadOnlyList<(string, double, double)>)list);
                }).ToList();
                WriteSummary(summaryPath, new FitSummary(fit.LogLikelihood, fit.NullLogLikelihood, d.Rows.Count, ridge, terms, d.References, validated), context.CreateOutput);
            }
        }
        catch (OutputException ex)
        {
            context.Error.WriteLine(ex.Line);
            return ExitCode.Input;
        }

        for (int c = 1; c < fit.ClassCount; c++)
        {
            context.Out.WriteLine(MultinomialFitReport.Heading(classes, c));
            var rows = MultinomialFitReport.ClassRows(fit, d.Names, d.Signs, c);
            var table = new TextTable([rows[0][0], .. rows[0].Skip(1).Select(h => ">" + h)]);
            foreach (var row in rows.Skip(1))
            {
                table.Add(row);
            }
            table.Write(context.Out, "  ");
            context.Out.WriteLine();
        }
        var lines = MultinomialFitReport.SummaryLines(fit);
        int width = lines.Max(l => l.Label.Length);
        foreach (var (label, value) in lines)
        {
            context.Out.WriteLine(label.PadRight(width) + "  " + value);
        }
        context.Out.WriteLine();
        context.Out.WriteLine(d.References.Length == 0 ? CollinearityNone : CollinearityLine(d.References));
        if (validated is not null)
        {
            context.Out.WriteLine(CrossValidationReport.Format(validated));
        }
        context.Out.WriteLine($"Fitted {d.Rows.Count:N0} labelled events over {k} classes jointly ({d.Rejected:N0} lines rejected) on {d.SlotOf.Length:N0} features; model written to {outPath}.");
        return ExitCode.Ok;
    }

    private static void WriteClassModel(string path, DriftlineOptions options, Featurizer featurizer, MultinomialFitResult fit,
        FittedDesign d, int[] labels, double ridge, Func<string, Stream> create)
    {
        int k = fit.ClassCount;
        // The online softmax model keeps K weight vectors; the base class's are 0, as fitted.
        var weights = new Dictionary<int, double[]> { [d.BiasSlot] = [.. fit.Intercepts] };
        var squares = new Dictionary<int, double[]> { [d.BiasSlot] = new double[k] };
        for (int c = 0; c < d.SlotOf.Length; c++)
        {
            weights[d.SlotOf[c]] = Enumerable.Range(0, k).Select(j => fit.Coefficients[j][c]).ToArray();
            squares[d.SlotOf[c]] = new double[k];
        }
        var p = new double[k];
        for (int r = 0; r < d.Rows.Count; r++)
        {
            fit.Predict(d.Rows[r], p);
            for (int j = 0; j < k; j++)
            {
                double g = p[j] - (labels[r] == j ? 1 : 0);
                squares[d.BiasSlot][j] += g * g;
                for (int c = 0; c < d.SlotOf.Length; c++)
                {
                    double x = d.Rows[r][c];
                    squares[d.SlotOf[c]][j] += g * g * x * x;
                }
            }
        }
        var counts = Enumerable.Range(0, k).Select(j => (long)labels.Count(l => l == j)).ToArray();
        var snapshot = new EngineSnapshot
        {
            Options = options,
            Models =
            [
                new ModelSnapshot
                {
                    Key = ScoringEngine.DefaultKey,
                    Learner = WarmStart.FromClassWeights(options.Model, weights, squares, d.Rows.Count),
                    Scaling = featurizer.Scaler.Export().ToList(),
                    PriorCount = labels.Length,
                    PriorClassCounts = counts,
                },
            ],
            FeatureNames = d.FeatureNames,
            BatchFit = new BatchFitSnapshot
            {
                Method = "joint multinomial (softmax) maximum likelihood, Newton",
                Rows = d.Rows.Count,
                Ridge = ridge,
                Iterations = fit.Iterations,
                LogLikelihood = fit.LogLikelihood,
                NullLogLikelihood = fit.NullLogLikelihood,
                ReferenceLevels = [.. d.References],
            },
        };
        string? folder = Path.GetDirectoryName(Path.GetFullPath(path));
        if (folder is not null)
        {
            OutputFolder.Create(folder);
        }
        OutputFile.Write(path, file => SnapshotCodec.Write(snapshot, file), create);
    }
}
