using System.CommandLine;
using System.Globalization;
using Driftline.Configuration;
using Driftline.Core.Events;
using Driftline.Core.Features;
using Driftline.Core.Fitting;
using Driftline.Core.Learning;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Core.Snapshots;
using Driftline.Output;
using Driftline.Pipeline;

namespace Driftline.Cli;

/// <summary>
/// <c>driftline fit FILE --out MODEL [--config FILE] [--ridge L2]</c>: a batch
/// maximum-likelihood logistic fit (Newton/IRLS) on a labelled file, with the online model's
/// own features, saved as a model that <c>replay --warm-start</c> continues from.
/// </summary>
internal sealed partial class FitCommand(CommandContext context)
{
    /// <summary>Most distinct features a batch fit takes (the Hessian is dense).</summary>
    public const int MaxColumns = 2_000;

    /// <summary>The folds' seed when <c>--seed</c> is not given: fixed, so reruns agree.</summary>
    public const int DefaultSeed = 20261202;

    /// <summary>The command-line definition.</summary>
    public Command Build()
    {
        var file = new Argument<string>("FILE") { Description = "Labelled events (inline labels or label-only records), one JSON object per line" };
        var output = new Option<string>("--out") { Description = "Model file to write", Required = true };
        var config = new Option<string?>("--config") { Description = "Configuration whose Model section sets hashing, scaling and interactions" };
        var ridge = new Option<double>("--ridge") { Description = "L2 penalty on the coefficients (not the intercept); 0 is plain maximum likelihood", DefaultValueFactory = _ => 0 };
        var folds = new Option<int>("--folds") { HelpName = "K", Description = "Cross-validate with this many stratified folds (0: no cross-validation)", DefaultValueFactory = _ => 0 };
        var repeats = new Option<int>("--repeats") { HelpName = "R", Description = "Repetitions of the cross-validation, each with new folds", DefaultValueFactory = _ => 1 };
        var seed = new Option<int>("--seed") { Description = "Seed of the folds' shuffle; the same seed gives the same folds", DefaultValueFactory = _ => DefaultSeed };
        var summary = new Option<string?>("--summary") { HelpName = "FILE", Description = "Also write the fit's figures (and the cross-validation's) as JSON to this file" };
        var command = new Command("fit", "Fit a batch logistic model on a labelled file, to warm-start the online model") { file, output, config, ridge, folds, repeats, seed, summary };
        command.SetAction(result => Run(result.GetValue(file)!, result.GetValue(output)!, result.GetValue(config), result.GetValue(ridge),
            new CrossValidationRequest(result.GetValue(folds), result.GetValue(repeats), result.GetValue(seed), result.GetResult(repeats) is { Implicit: false }),
            result.GetValue(summary)));
        return command;
    }

    /// <summary>Runs the fit; returns the exit code.</summary>
    public int Run(string file, string outPath, string? configPath, double ridge, CrossValidationRequest? crossValidation = null, string? summaryPath = null)
    {
        var cv = crossValidation ?? new CrossValidationRequest(0, 1, DefaultSeed, false);
        var options = ConfigLoader.Load(configPath, context.Environment, out var errors);
        if (options is null)
        {
            return ConfigErrors.Report(context.Error, configPath, errors);
        }
        if (!(ridge >= 0) || !double.IsFinite(ridge))
        {
            context.Error.WriteLine("driftline: --ridge must be 0 or a positive number");
            return ExitCode.Usage;
        }
        if (cv.Folds != 0 && cv.Folds < 2)
        {
            context.Error.WriteLine("driftline: --folds must be 2 or more (or 0 for no cross-validation)");
            return ExitCode.Usage;
        }
        if (cv.Repeats < 1 || (cv.RepeatsGiven && cv.Folds == 0))
        {
            context.Error.WriteLine(cv.Repeats < 1 ? "driftline: --repeats must be 1 or more" : "driftline: --repeats needs --folds K (2 or more)");
            return ExitCode.Usage;
        }
        if (summaryPath is not null && Directory.Exists(summaryPath))
        {
            context.Error.WriteLine(new OutputException(summaryPath, "it is a folder; --summary names the JSON file to write, such as fit-summary.json").Line);
            return ExitCode.Input;
        }
        if (Directory.Exists(outPath))
        {
            context.Error.WriteLine(new OutputException(outPath, $"it is a folder; --out names the model file to write, such as {Path.Combine(outPath, ReplayCommand.ModelFile)}").Line);
            return ExitCode.Input;
        }
        var lines = ReadLines(file, options.Input.MaxLineBytes);
        if (lines is null)
        {
            return ExitCode.Input;
        }

        // The parser records the text behind every hash it makes, so the columns, the messages
        // and the saved model all name features (interactions included) rather than slots.
        var recorded = new FeatureNames();
        var parser = new EventParser { MaxTextBytes = options.Input.MaxTextBytes, Names = recorded, Classes = options.Model.Classes };
        var record = new ParsedRecord();
        var featurizer = new Featurizer(options.Model);
        var x = new SparseVector();
        var lateLabels = new Dictionary<string, int>(StringComparer.Ordinal);
        int rejected = 0;
        // Pass 1: scaling statistics over every event, and the late labels by id.
        foreach (var line in lines)
        {
            if (line is null || !parser.TryParse(line, record, out _))
            {
                rejected += line is not null && line.AsSpan().Trim(" \t"u8).IsEmpty ? 0 : 1;
                continue;
            }
            if (record.Kind == RecordKind.Event)
            {
                featurizer.Featurize(record, x);
            }
            else if (record.Kind == RecordKind.Label)
            {
                lateLabels[record.Id] = record.Label;
            }
        }
        featurizer.Scaler.Frozen = true;

        // Pass 2: the design, one column per hashed slot other than the bias.
        int mask = (1 << options.Model.HashBits) - 1;
        int biasSlot = FeatureHash.Slot(FeatureHash.Bias, mask);
        var columns = new Dictionary<int, int>();
        var rows = new List<(int[] Columns, double[] Values)>();
        var labels = new List<double>();
        foreach (var line in lines)
        {
            if (line is null || !parser.TryParse(line, record, out _) || record.Kind != RecordKind.Event)
            {
                continue;
            }
            int label = record.HasLabel ? record.Label : lateLabels.GetValueOrDefault(record.Id, -1);
            if (label < 0)
            {
                continue;
            }
            featurizer.Featurize(record, x);
            var cols = new List<int>();
            var vals = new List<double>();
            for (int i = 0; i < x.Count; i++)
            {
                if (x.Slots[i] == biasSlot)
                {
                    continue;
                }
                if (!columns.TryGetValue(x.Slots[i], out int c))
                {
                    c = columns.Count;
                    columns.Add(x.Slots[i], c);
                }
                cols.Add(c);
                vals.Add(x.Values[i]);
            }
            rows.Add(([.. cols], [.. vals]));
            labels.Add(label);
        }
        if (rows.Count == 0)
        {
            // The file was read; it holds nothing a fit can use, which is the data's limit, not an unreadable input.
            context.Error.WriteLine($"driftline: '{file}' has no labelled events to fit; give fit events with a label, or label-only records for their ids");
            return ExitCode.FitFailed;
        }
        if (columns.Count > MaxColumns)
        {
            context.Error.WriteLine($"driftline: {columns.Count:N0} distinct features is more than a batch fit takes ({MaxColumns:N0}); fit on fewer features or let the online model learn them");
            return ExitCode.FitFailed;
        }

        var recordedNames = recorded.Entries.ToDictionary(e => e.Key.ToString(CultureInfo.InvariantCulture), e => e.Value);
        var slotNames = SlotNames.Build(recordedNames, options.Model);
        var allSlots = columns.OrderBy(kv => kv.Value).Select(kv => kv.Key).ToArray();
        var full = rows.Select(r =>
        {
            var dense = new double[allSlots.Length];
            for (int i = 0; i < r.Columns.Length; i++)
            {
                dense[r.Columns[i]] += r.Values[i];
            }
            return dense;
        }).ToList();

        // One-hot categoricals sum to the intercept's column: leave one level of each out.
        var groups = allSlots.Select(s => slotNames.TryName(s, out string n, out _) ? SlotNames.CategoricalOf(n) : null).ToArray();
        var dropped = ReferenceLevels.Choose(full, groups).ToHashSet();
        var references = dropped.Order().Select(c => slotNames.Describe(allSlots[c], 1, out _)).ToArray();
        // An interaction with a one-hot categorical sums over its levels to the other feature, so
        // the cells of each reference level go too (treatment coding of interactions).
        var referenceSet = references.ToHashSet(StringComparer.Ordinal);
        for (int c = 0; c < allSlots.Length; c++)
        {
            if (slotNames.TryName(allSlots[c], out string n, out _) && n.Contains(" × ", StringComparison.Ordinal)
                && n.Split(" × ").Any(referenceSet.Contains))
            {
                dropped.Add(c);
            }
        }
        var keep = Enumerable.Range(0, allSlots.Length).Where(c => !dropped.Contains(c)).ToArray();
        var slotOf = keep.Select(c => allSlots[c]).ToArray();
        var design = dropped.Count == 0 ? full : full.Select(r => keep.Select(c => r[c]).ToArray()).ToList();

        var columnNames = slotOf.Select(s => slotNames.Describe(s, 1, out _)).ToArray();
        // Report coefficients in the features' own direction: hashed columns carry a sign.
        var signs = slotOf.Select(s => slotNames.TryName(s, out _, out double sign) ? sign : 1.0).ToArray();
        if (options.Model.IsMulticlass)
        {
            var fitted = new FittedDesign(design, labels, slotOf, columnNames, signs, references, biasSlot, recordedNames, rejected);
            return FitClasses(options, featurizer, fitted, outPath, summaryPath, ridge, cv);
        }
        var fit = LogisticNewtonFit.Fit(design, labels, ridge, featureNames: columnNames);
        var natural = fit with
        {
            Coefficients = fit.Coefficients.Select((c, i) => c * signs[i]).ToArray(),
            ZValues = fit.ZValues.Select((z, i) => z * signs[i]).ToArray(),
        };
        if (!fit.Converged)
        {
            // One line and no table: the estimates of a failed fit are not a result.
            context.Error.WriteLine($"driftline: the fit did not converge: {fit.Problem}");
            return ExitCode.FitFailed;
        }

        CrossValidationResult? validated = null;
        if (cv.Folds > 0)
        {
            var y = labels.Select(l => (int)l).ToArray();
            int rarer = Math.Min(y.Count(l => l == 1), y.Count(l => l == 0));
            if (cv.Folds > rarer)
            {
                context.Error.WriteLine($"driftline: --folds {cv.Folds} is more than the {rarer:N0} events of the rarer label, so some folds would hold none; use at most {rarer:N0} folds");
                return ExitCode.FitFailed;
            }
            var assignments = CrossValidation.Assignments(y, cv.Folds, cv.Repeats, cv.Seed);
            validated = CrossValidation.Run(y, assignments, cv.Seed, LogisticFoldFit.Step(design, y, ridge, columnNames), out string? problem);
            if (validated is null)
            {
                context.Error.WriteLine($"driftline: cross-validation failed at {problem}");
                return ExitCode.FitFailed;
            }
        }

        // The model is on disk before any table is shown: a table above an error line would
        // read as a result that was never saved.
        try
        {
            var made = new BatchFitSnapshot
            {
                Method = "maximum likelihood, Newton/IRLS",
                Rows = rows.Count,
                Ridge = ridge,
                Iterations = fit.Iterations,
                LogLikelihood = fit.LogLikelihood,
                NullLogLikelihood = fit.NullLogLikelihood,
                ReferenceLevels = [.. references],
            };
            WriteModel(outPath, options, featurizer, fit, slotOf, design, labels, biasSlot, recordedNames, made, context.CreateOutput);
            if (summaryPath is not null)
            {
                var terms = new List<(string, double, double)> { ("intercept", natural.Intercept, natural.InterceptStandardError) };
                terms.AddRange(columnNames.Select((n, j) => (n, natural.Coefficients[j], natural.StandardErrors[j])));
                var figures = new FitSummary(fit.LogLikelihood, fit.NullLogLikelihood, rows.Count, ridge, [("1", terms)], references, validated);
                WriteSummary(summaryPath, figures, context.CreateOutput);
            }
        }
        catch (OutputException ex)
        {
            context.Error.WriteLine(ex.Line);
            return ExitCode.Input;
        }
        WriteTable(context.Out, new FitReport(natural, columnNames));
        context.Out.WriteLine(references.Length == 0
            ? CollinearityNone
            : CollinearityLine(references));
        if (validated is not null)
        {
            context.Out.WriteLine(CrossValidationReport.Format(validated));
        }
        context.Out.WriteLine($"Fitted {rows.Count:N0} labelled events ({rejected:N0} lines rejected) on {slotOf.Length:N0} features; model written to {outPath}.");
        return ExitCode.Ok;
    }

    private static void WriteModel(string path, DriftlineOptions options, Featurizer featurizer, LogisticFitResult fit,
        int[] slotOf, List<double[]> design, List<double> labels, int biasSlot, Dictionary<string, string> featureNames, BatchFitSnapshot made, Func<string, Stream> create)
    {
        var weights = new Dictionary<int, double> { [biasSlot] = fit.Intercept };
        var squares = new Dictionary<int, double> { [biasSlot] = 0 };
        for (int c = 0; c < slotOf.Length; c++)
        {
            weights[slotOf[c]] = fit.Coefficients[c];
            squares[slotOf[c]] = 0;
        }
        for (int r = 0; r < design.Count; r++)
        {
            double eta = fit.Intercept;
            for (int c = 0; c < slotOf.Length; c++)
            {
                eta += fit.Coefficients[c] * design[r][c];
            }
            double g = LogisticMath.Probability(eta) - labels[r];
            squares[biasSlot] += g * g;
            for (int c = 0; c < slotOf.Length; c++)
            {
                squares[slotOf[c]] += g * g * design[r][c] * design[r][c];
            }
        }
        var snapshot = new EngineSnapshot
        {
            Options = options,
            Models =
            [
                new ModelSnapshot
                {
                    Key = ScoringEngine.DefaultKey,
                    Learner = WarmStart.FromWeights(options.Model, weights, squares, design.Count),
                    Scaling = featurizer.Scaler.Export().ToList(),
                    PriorCount = labels.Count,
                    PriorPositives = (long)labels.Sum(),
                },
            ],
            FeatureNames = featureNames,
            BatchFit = made,
        };
        string? folder = Path.GetDirectoryName(Path.GetFullPath(path));
        if (folder is not null)
        {
            OutputFolder.Create(folder);
        }
        OutputFile.Write(path, file => SnapshotCodec.Write(snapshot, file), create);
    }

    private const string CollinearityNone = "Collinearity: no categorical is one-hot in every row, so every level is fitted.";

    private static string CollinearityLine(IReadOnlyList<string> references) =>
        "Collinearity: one reference level per categorical is left out (treatment coding; its effect is in the intercept, " +
        $"the other levels are contrasts with it, and its interaction cells go too): {string.Join(", ", references)}.";

    private static void WriteSummary(string path, FitSummary summary, Func<string, Stream> create)
    {
        string? folder = Path.GetDirectoryName(Path.GetFullPath(path));
        if (folder is not null)
        {
            OutputFolder.Create(folder);
        }
        OutputFile.Write(path, summary.Write, create);
    }

    // The file's lines, each null where it is over Input:MaxLineBytes (skipped, not held).
    private List<byte[]?>? ReadLines(string file, int maxLineBytes)
    {
        using var input = InputFiles.Open(file, context);
        if (input is null)
        {
            return null;
        }
        var lines = new List<byte[]?>();
        var splitter = new LineSplitter(maxLineBytes);
        while (true)
        {
            splitter.Advance(input.Read(splitter.Space().Span));
            LineKind found;
            while ((found = splitter.Next(out var line, out _)) is LineKind.Line or LineKind.Oversized)
            {
                lines.Add(found == LineKind.Line ? line.ToArray() : null);
            }
            if (found == LineKind.End)
            {
                return lines;
            }
        }
    }

    // The coefficient table through the shared text table (Spectre.Console), then its summary lines.
    private static void WriteTable(TextWriter o, FitReport report)
    {
        var rows = report.TermRows();
        var table = new TextTable([rows[0][0], .. rows[0].Skip(1).Select(h => ">" + h)]);
        foreach (var row in rows.Skip(1))
        {
            table.Add(row);
        }
        table.Write(o);
        o.WriteLine();
        var summary = report.SummaryLines();
        int width = summary.Max(s => s.Label.Length);
        foreach (var (label, value) in summary)
        {
            o.WriteLine(label.PadRight(width) + "  " + value);
        }
        o.WriteLine();
    }
}
