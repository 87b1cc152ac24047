using System.Globalization;
using Driftline.Core.Learning;

namespace Driftline.Core.Snapshots;

/// <summary>
/// Checks a snapshot read from disk before anything uses it, so a damaged or hand-edited
/// model.json is refused at load time with one line naming what is wrong, instead of loading
/// silently and failing on the first graded event. Places are named as in the file
/// (<c>models[2].learner.slots</c>).
/// </summary>
internal static class SnapshotValidator
{
    /// <summary>
    /// Largest weight magnitude accepted. The margin is clamped at ±35 when scoring, and no
    /// fitted logistic coefficient comes near a billion even on raw, unscaled features; a larger
    /// one is damage, and it could overflow when multiplied by a large feature value.
    /// </summary>
    public const double MaxWeight = 1e9;

    /// <summary>Largest forgetting factor a learner stores (it renormalises above 1e150).</summary>
    public const double MaxInflation = 1e151;

    private static readonly CultureInfo C = CultureInfo.InvariantCulture;

    /// <summary>Throws <see cref="InvalidDataException"/> naming the first problem found in <paramref name="snapshot"/>.</summary>
    public static void Check(EngineSnapshot snapshot)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        var options = snapshot.Options ?? throw Damage("options", "is missing (null)");
        if (options.Model is null || options.Labels is null || options.Monitor is null)
        {
            throw Damage("options", $"section '{(options.Model is null ? "model" : options.Labels is null ? "labels" : "monitor")}' is missing (null)");
        }
        if (options.Model.Interactions is null || options.Model.FixedScales is null || options.Model.Interactions.Any(i => i is null))
        {
            throw Damage("options.model", "interactions or fixed_scales is null");
        }
        if (options.Alerts is { } alerts && alerts.Any(a => a is null || a.Name is null))
        {
            throw Damage("options.alerts", "holds a rule that is null or has no name");
        }
        if (options.Validate() is { Count: > 0 } errors)
        {
            throw Damage("options", $"the settings are invalid: {errors[0]}");
        }
        var models = snapshot.Models ?? throw Damage("models", "is missing (null)");
        if (models.Count > options.Model.MaxModels)
        {
            throw Damage("models", $"holds {models.Count.ToString("N0", C)} models, more than its Model:MaxModels of {options.Model.MaxModels.ToString("N0", C)}");
        }
        var keys = new HashSet<string>(StringComparer.Ordinal);
        for (int i = 0; i < models.Count; i++)
        {
            string at = $"models[{i}]";
            var model = models[i] ?? throw Damage(at, "is null");
            if (model.Key is null)
            {
                throw Damage(at + ".key", "is missing (null)");
            }
            if (!keys.Add(model.Key))
            {
                throw Damage(at + ".key", $"'{model.Key}' is the key of an earlier model too");
            }
            CheckLearner(at + ".learner", model.Learner, options.Model);
            CheckScaling(at + ".scaling", model.Scaling);
            if (model.PriorCount < 0 || model.PriorPositives < 0 || model.PriorPositives > model.PriorCount || model.Scored < 0)
            {
                throw Damage(at, $"counts are impossible (prior_count {model.PriorCount}, prior_positives {model.PriorPositives}, scored {model.Scored})");
            }
            if (model.Recalibration is { } recalibration)
            {
                // The same checks the layer makes when it imports the state, named by place here.
                try
                {
                    Recalibration.IRecalibration.Create(options.Recalibration, options.Model.IsMulticlass ? options.Model.ClassCount : 1).Import(recalibration);
                }
                catch (ArgumentException)
                {
                    throw Damage(at + ".recalibration", options.Model.IsMulticlass
                        ? $"is impossible: vector scaling over {options.Model.ClassCount} classes needs {options.Model.ClassCount} finite intercepts within ±20 and slopes within {options.Recalibration.MinSlope}–{options.Recalibration.MaxSlope}, and a {2 * options.Model.ClassCount} × {2 * options.Model.ClassCount} finite curvature"
                        : $"is impossible: it needs a finite intercept within ±20, a slope within {options.Recalibration.MinSlope}–{options.Recalibration.MaxSlope} and three finite curvature terms");
                }
            }
            if (options.Model.IsMulticlass != model.PriorClassCounts is not null
                || (model.PriorClassCounts is { } counts && (counts.Length != options.Model.ClassCount || counts.Any(c => c < 0) || counts.Sum() != model.PriorCount)))
            {
                throw Damage(at + ".prior_class_counts", $"does not hold one count per class of Model:Classes summing to prior_count {model.PriorCount}");
            }
        }
        CheckRest(snapshot, models.Count, 1 << options.Model.HashBits);
    }

    private static void CheckLearner(string at, LearnerState? state, Options.ModelOptions options)
    {
        if (state is null)
        {
            throw Damage(at, "is missing (null)");
        }
        if (state.Slots is null || state.First is null || state.Second is null || state.Third is null)
        {
            throw Damage(at, "slots, first, second or third is null");
        }
        int n = state.Slots.Length;
        // A softmax model keeps one value per class for every slot.
        int outputs = options.IsMulticlass ? options.ClassCount : 1;
        int entries = n * outputs;
        int third = options.Learner == Options.LearnerKind.Ftrl ? entries : 0;
        if (state.First.Length != entries || state.Second.Length != entries || state.Third.Length != third)
        {
            string per = outputs == 1 ? "" : $" ({outputs} classes per slot)";
            throw Damage(at, $"has {n} slots but {state.First.Length}, {state.Second.Length} and {state.Third.Length} values in first, second and third (expected {entries}, {entries} and {third} for {options.Learner}{per})");
        }
        int size = 1 << options.HashBits;
        var seen = new HashSet<int>();
        foreach (int slot in state.Slots)
        {
            if (slot < 0 || slot >= size)
            {
                throw Damage(at + ".slots", $"slot {slot} is outside the {size.ToString("N0", C)} slots of its Model:HashBits {options.HashBits}");
            }
            if (!seen.Add(slot))
            {
                throw Damage(at + ".slots", $"slot {slot} is listed twice");
            }
        }
        for (int i = 0; i < entries; i++)
        {
            Finite(at + ".first", state.First[i], i);
            Finite(at + ".second", state.Second[i], i);
            if (state.Second[i] < 0 || (third > 0 && (!double.IsFinite(state.Third[i]) || state.Third[i] < 0)))
            {
                throw Damage(at, $"slot {state.Slots[i / outputs]} has a negative or non-finite accumulated gradient");
            }
        }
        if (!double.IsFinite(state.Inflation) || state.Inflation < 1 || state.Inflation > MaxInflation)
        {
            throw Damage(at + ".inflation", $"{state.Inflation.ToString("R", C)} is outside 1–{MaxInflation.ToString("0e0", C)}");
        }
        if (state.Updates < 0 || state.RefusedUpdates < 0)
        {
            throw Damage(at, "has a negative update count");
        }
        var learner = OnlineLearner.Create(options);
        learner.Import(state);
        foreach (int slot in state.Slots)
        {
            double w = Enumerable.Range(0, outputs).Select(k => learner.Weight(slot, k)).MaxBy(v => double.IsFinite(v) ? Math.Abs(v) : double.PositiveInfinity);
            if (!double.IsFinite(w) || Math.Abs(w) > MaxWeight)
            {
                throw Damage(at, $"the weight of slot {slot} is {w.ToString("R", C)}, beyond ±{MaxWeight.ToString("0e0", C)}: the file is damaged");
            }
        }
    }

    private static void CheckScaling(string at, List<Features.NumericStats>? scaling)
    {
        if (scaling is null)
        {
            throw Damage(at, "is missing (null)");
        }
        var names = new HashSet<ulong>();
        for (int i = 0; i < scaling.Count; i++)
        {
            var s = scaling[i];
            if (!names.Add(s.NameHash))
            {
                throw Damage($"{at}[{i}]", $"feature hash {s.NameHash} has statistics twice");
            }
            if (s.Count < 0 || !double.IsFinite(s.Mean) || !double.IsFinite(s.SumSquares) || s.SumSquares < 0)
            {
                throw Damage($"{at}[{i}]", $"statistics are impossible (count {s.Count}, mean {s.Mean.ToString("R", C)}, sum_squares {s.SumSquares.ToString("R", C)})");
            }
        }
    }

    // The parts a warm start ignores but a restore reads: present, and consistent with the models.
    private static void CheckRest(EngineSnapshot s, int models, int size)
    {
        _ = s.Counters ?? throw Damage("counters", "is missing (null)");
        var pending = s.Pending ?? throw Damage("pending", "is missing (null)");
        for (int i = 0; i < pending.Count; i++)
        {
            string at = $"pending[{i}]";
            // A null entry in the file is refused by the JSON reader itself (an entry is a value).
            var p = pending[i];
            if (p.Id is null || p.Model < 0 || p.Model >= models)
            {
                throw Damage(at, $"has no id or names model {p.Model}, and the file holds {models}");
            }
            if (!Probability(p.P) || !Probability(p.PriorP) || (p.Served is { } served && !Probability(served)))
            {
                throw Damage(at, "has a probability outside 0–1");
            }
            if ((p.ClassP is null) != (p.ClassPriorP is null) || (p.ClassP is not null && (p.ClassP.Length != p.ClassPriorP!.Length || p.ClassP.Concat(p.ClassPriorP).Any(v => !Probability(v)))))
            {
                throw Damage(at, "class_p and class_prior_p differ in length or hold a probability outside 0–1");
            }
            if (p.ServedClassP is { } servedClassP && (p.ClassP is null || servedClassP.Length != p.ClassP.Length || servedClassP.Any(v => !Probability(v))))
            {
                throw Damage(at, "served_class_p is not one probability per class of class_p");
            }
            if ((p.Slots is null) != (p.Values is null) || (p.Slots is not null && p.Slots.Length != p.Values!.Length))
            {
                throw Damage(at, "slots and values differ in length");
            }
            if (p.Slots is not null && (p.Slots.Any(x => x < 0 || x >= size) || p.Values!.Any(v => !double.IsFinite(v))))
            {
                throw Damage(at, "has a slot out of range or a value that is not finite");
            }
        }
        var windows = s.Windows ?? throw Damage("windows", "is missing (null)");
        for (int i = 0; i < windows.Count; i++)
        {
            var w = windows[i];
            if (w?.Model is null || w.Prior is null || w.Model.Concat(w.Prior).Any(g => !Probability(g.P)))
            {
                throw Damage($"windows[{i}]", "is null, or holds a probability outside 0–1");
            }
        }
        var timed = s.TimeWindows ?? throw Damage("time_windows", "is missing (null)");
        for (int i = 0; i < timed.Count; i++)
        {
            var w = timed[i];
            if (w?.Model is null || w.Prior is null || w.Model.Concat(w.Prior).Any(g => !Probability(g.P)))
            {
                throw Damage($"time_windows[{i}]", "is null, or holds a probability outside 0–1");
            }
        }
        var rules = s.Rules ?? throw Damage("rules", "is missing (null)");
        for (int i = 0; i < rules.Count; i++)
        {
            if (rules[i]?.Name is null)
            {
                throw Damage($"rules[{i}]", "is null or has no name");
            }
        }
        if (s.Classes is { } classes && classes.Any(c => c?.Windows is null || c.TimeWindows is null || c.Rules is null || c.Class is null))
        {
            throw Damage("classes", "holds a class channel that is null, unnamed or missing its windows or rules");
        }
        if (s.Segments is { } segments && segments.Any(g => g?.Name is null || g.Contents is null))
        {
            throw Damage("segments", "holds a segment that is null or has no name");
        }
    }

    private static bool Probability(double p) => p is >= 0 and <= 1;

    private static void Finite(string at, double value, int index)
    {
        if (!double.IsFinite(value))
        {
            throw Damage($"{at}[{index}]", $"is {value.ToString("R", C)}, not a finite number");
        }
    }

    private static InvalidDataException Damage(string at, string problem) => new($"{at} {problem}");
}
