using System.CommandLine;
using System.Globalization;
using Driftline.Core.Features;
using Driftline.Core.Learning;
using Driftline.Core.Options;
using Driftline.Core.Snapshots;
using Driftline.Output;

namespace Driftline.Cli;

/// <summary>
/// <c>driftline inspect MODEL</c>: what a saved model is: its version and training counts,
/// the weights that move its probabilities most, with the feature names behind their hashed
/// slots where the replay recorded them, and the settings it was trained with.
/// </summary>
internal sealed class InspectCommand(CommandContext context)
{
    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    /// <summary>The command-line definition.</summary>
    public Command Build()
    {
        var model = new Argument<string>("MODEL") { Description = "A saved model (model.json from replay)" };
        var top = new Option<int>("--top") { Description = "How many weights to list per key", DefaultValueFactory = _ => 20 };
        var command = new Command("inspect", "Show a saved model: version, training counts, the weights that matter most, settings") { model, top };
        command.SetAction(result => Run(result.GetValue(model)!, result.GetValue(top)));
        return command;
    }

    /// <summary>Describes the model in <paramref name="path"/>; returns the exit code.</summary>
    public int Run(string path, int top = 20)
    {
        if (top < 1)
        {
            context.Error.WriteLine("driftline: --top must be at least 1.");
            return ExitCode.Usage;
        }
        if (SavedModel.Read(path, context) is not { } snapshot)
        {
            return ExitCode.Input;
        }

        var o = context.Out;
        var options = snapshot.Options;
        var c = snapshot.Counters;
        o.WriteLine($"Model {path}");
        if (snapshot.BatchFit is { } fit)
        {
            DescribeFit(fit, o);
        }
        else
        {
            o.WriteLine($"  {snapshot.Models.Count:N0} key(s); {c.Events:N0} events scored, {c.Labels:N0} labels graded ({c.InlineLabels:N0} with their event, {c.LateLabels:N0} late), {snapshot.ExpiredLabels:N0} expired, {snapshot.Pending.Count(p => !p.Labelled):N0} still waiting.");
            o.WriteLine($"  alerts raised {c.AlertsRaised:N0}, cleared {c.AlertsCleared:N0}; open now: {Open(snapshot)}.");
        }
        o.WriteLine();

        var keys = new TextTable("key", ">version", ">events scored", ">labels seen", ">positive rate", ">weights set");
        foreach (var m in snapshot.Models)
        {
            // A multiclass model has no positive class; its class shares are in the summary.
            double rate = m.PriorCount > 0 && m.PriorClassCounts is null ? (double)m.PriorPositives / m.PriorCount : double.NaN;
            keys.Add(m.Key, m.Learner.Updates.ToString("N0", C), m.Scored.ToString("N0", C), m.PriorCount.ToString("N0", C),
                double.IsNaN(rate) ? "–" : rate.ToString("0.0000", C), m.Learner.Slots.Length.ToString("N0", C));
        }
        keys.Write(o);

        var names = SlotNames.Build(snapshot.FeatureNames, options.Model);
        int biasSlot = FeatureHash.Slot(FeatureHash.Bias, (1 << options.Model.HashBits) - 1);
        foreach (var (m, output) in snapshot.Models.SelectMany(m => Enumerable.Range(0, options.Model.IsMulticlass ? options.Model.ClassCount : 1).Select(k => (m, k))))
        {
            o.WriteLine();
            string which = options.Model.Classes is { } classes ? $"key '{m.Key}', class '{classes[output]}'" : $"key '{m.Key}'";
            var learner = OnlineLearner.Create(options.Model);
            learner.Import(m.Learner);
            // The intercept is a baseline log-odds (or class margin), not a feature's weight: shown apart.
            o.WriteLine($"{char.ToUpperInvariant(which[0])}{which[1..]}: intercept {Signed(learner.Weight(biasSlot, output))} (the margin when every feature is at its reference or average).");
            o.WriteLine($"Weights that matter most for {which} (numbers are per standard deviation when scaled online):");
            var ranked = m.Learner.Slots
                .Where(slot => slot != biasSlot)
                .Select(slot => (Slot: slot, Weight: learner.Weight(slot, output)))
                .Where(w => w.Weight != 0 && double.IsFinite(w.Weight))
                .OrderByDescending(w => Math.Abs(w.Weight)).ThenBy(w => w.Slot)
                .Take(top)
                .ToList();
            if (ranked.Count == 0)
            {
                o.WriteLine(snapshot.BatchFit is not null && output == 0 && options.Model.IsMulticlass
                    ? "  none: the base class of the fit, whose weights are 0; the other classes' weights are log-odds against it."
                    : "  none: the model has not learned yet.");
                continue;
            }
            var table = new TextTable("feature", ">weight", ">slot");
            foreach (var (slot, weight) in ranked)
            {
                table.Add(names.Describe(slot, weight, out double shown), Signed(shown), slot.ToString(C));
            }
            table.Write(o, "  ");
        }
        if (snapshot.FeatureNames is null)
        {
            o.WriteLine();
            o.WriteLine("This model carries no feature names (it was saved without them); slots are shown instead.");
        }

        o.WriteLine();
        if (snapshot.BatchFit is not null)
        {
            // A batch fit has no learning rate or forgetting: only the features mean anything here.
            DescribeFeatures(options.Model, o);
            return ExitCode.Ok;
        }
        o.WriteLine("Settings it was trained with:");
        var settings = new StringWriter(C);
        CheckCommand.Describe(options, settings);
        foreach (var line in settings.ToString().Split('\n', StringSplitOptions.RemoveEmptyEntries))
        {
            o.WriteLine("  " + line.TrimEnd('\r'));
        }
        return ExitCode.Ok;
    }

    private static void DescribeFit(BatchFitSnapshot fit, TextWriter o)
    {
        double r2 = fit.NullLogLikelihood < 0 ? 1 - (fit.LogLikelihood / fit.NullLogLikelihood) : double.NaN;
        o.WriteLine($"  fitted in one batch by {fit.Method} on {fit.Rows.ToString("N0", C)} labelled events ({fit.Iterations.ToString(C)} Newton steps); it has scored nothing yet.");
        o.WriteLine($"  log-likelihood {fit.LogLikelihood.ToString("0.0000", C)}, null {fit.NullLogLikelihood.ToString("0.0000", C)}, pseudo R-squared (McFadden) {r2.ToString("0.0000", C)}; "
            + (fit.Ridge > 0 ? $"ridge (L2) {fit.Ridge.ToString("G6", C)}." : "no penalty (plain maximum likelihood)."));
        o.WriteLine(fit.ReferenceLevels.Count == 0
            ? "  every categorical level has its own weight."
            : $"  reference levels (left out; their effect is in the intercept): {string.Join(", ", fit.ReferenceLevels)}.");
    }

    private static void DescribeFeatures(ModelOptions m, TextWriter o)
    {
        o.WriteLine("Features it was fitted with (a replay or worker warm-started from it learns with its own configuration's learner settings):");
        o.WriteLine($"  2^{m.HashBits} = {1 << m.HashBits:N0} hashed weights per key.");
        o.WriteLine(m.Scaling == ScalingMode.Online
            ? $"  numbers standardised by their mean and standard deviation over the fitted file, clipped at ±{m.StandardisedLimit} sd."
            : "  numbers used as given.");
        foreach (var (name, scale) in m.FixedScales)
        {
            o.WriteLine($"  {name} divided by {scale}.");
        }
        o.WriteLine(m.Interactions.Count == 0 ? "  no interactions." : $"  interactions: {string.Join(", ", m.Interactions)}.");
    }

    private static string Open(EngineSnapshot s)
    {
        var open = s.Rules.Where(r => r.Raised).Select(r => r.Name).ToList();
        return open.Count == 0 ? "none" : string.Join(", ", open);
    }

    private static string Signed(double w) => (w >= 0 ? "+" : "") + w.ToString("0.0000", C);
}
