using System.Text.Json;
using Driftline.Core.Fitting;

namespace Driftline.Cli;

/// <summary>
/// <c>fit --summary FILE</c>: the fit's figures as JSON, for scripts: the log-likelihoods, the
/// coefficients and standard errors by class (a binary model's one class is its positive label,
/// "1"), the reference levels and, with folds, a <c>cv</c> object.
/// </summary>
/// <param name="LogLikelihood">At the estimate.</param>
/// <param name="NullLogLikelihood">Of the intercept-only model.</param>
/// <param name="Rows">Labelled events fitted.</param>
/// <param name="Ridge">L2 penalty.</param>
/// <param name="Terms">Per class: each term's name, estimate and standard error, intercept first.</param>
/// <param name="ReferenceLevels">Levels left out, one per one-hot categorical.</param>
/// <param name="CrossValidation">The cross-validation, or null without <c>--folds</c>.</param>
internal sealed record FitSummary(
    double LogLikelihood,
    double NullLogLikelihood,
    long Rows,
    double Ridge,
    IReadOnlyList<(string Class, IReadOnlyList<(string Term, double Estimate, double StandardError)> Terms)> Terms,
    IReadOnlyList<string> ReferenceLevels,
    CrossValidationResult? CrossValidation)
{
    /// <summary>Writes the summary as one JSON object (NaN, with no estimate, as null).</summary>
    public void Write(Stream stream)
    {
        using var json = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = true });
        json.WriteStartObject();
        Number(json, "log_likelihood", LogLikelihood);
        Number(json, "null_log_likelihood", NullLogLikelihood);
        Number(json, "mcfadden_pseudo_r2", NullLogLikelihood < 0 ? 1 - (LogLikelihood / NullLogLikelihood) : double.NaN);
        json.WriteNumber("rows", Rows);
        json.WriteNumber("ridge", Ridge);
        json.WriteStartArray("reference_levels");
        foreach (string level in ReferenceLevels)
        {
            json.WriteStringValue(level);
        }
        json.WriteEndArray();
        foreach (var (property, standardError) in new[] { ("coefficients", false), ("standard_errors", true) })
        {
            json.WriteStartObject(property);
            foreach (var (name, terms) in Terms)
            {
                json.WriteStartObject(name);
                foreach (var (term, estimate, se) in terms)
                {
                    Number(json, term, standardError ? se : estimate);
                }
                json.WriteEndObject();
            }
            json.WriteEndObject();
        }
        if (CrossValidation is { } cv)
        {
            json.WriteStartObject("cv");
            json.WriteNumber("folds", cv.Folds);
            json.WriteNumber("repeats", cv.Repeats);
            json.WriteNumber("seed", cv.Seed);
            Figure(json, "log_loss", cv.Model(s => s.LogLoss));
            Figure(json, "brier", cv.Model(s => s.Brier));
            Figure(json, "ece", cv.Model(s => s.Ece));
            Figure(json, "auc", cv.Model(s => s.Auc));
            Figure(json, "accuracy", cv.Model(s => s.Accuracy));
            Figure(json, "prior_log_loss", cv.Prior(s => s.LogLoss));
            Figure(json, "prior_brier", cv.Prior(s => s.Brier));
            Figure(json, "prior_ece", cv.Prior(s => s.Ece));
            Figure(json, "prior_accuracy", cv.Prior(s => s.Accuracy));
            Number(json, "log_loss_skill", cv.Skill(s => s.LogLoss));
            Number(json, "brier_skill", cv.Skill(s => s.Brier));
            json.WriteEndObject();
        }
        json.WriteEndObject();
    }

    // Mean, spread over folds and spread of the repetitions' means: "spread across repetitions".
    private static void Figure(Utf8JsonWriter json, string name, MetricSummary summary)
    {
        json.WriteStartObject(name);
        Number(json, "mean", summary.Mean);
        Number(json, "sd", summary.Sd);
        Number(json, "sd_of_repeat_means", summary.SdOfRepeatMeans);
        json.WriteEndObject();
    }

    private static void Number(Utf8JsonWriter json, string name, double value)
    {
        if (double.IsFinite(value))
        {
            json.WriteNumber(name, value);
        }
        else
        {
            json.WriteNull(name);
        }
    }
}
