using System.Text.Json;
using Driftline.Core.Fitting;
using Xunit;

namespace Driftline.Core.Tests.Fitting;

/// <summary>
/// Cross-validation against scikit-learn on the same folds: Reference/cross_validation.json,
/// made by Reference/cross_validation.py (scikit-learn 1.2.1 RepeatedStratifiedKFold, 10 × 10
/// folds, an unpenalised LogisticRegression on anes96.csv; see Reference/README.md).
/// </summary>
public sealed class CrossValidationReferenceTests
{
    private static readonly JsonElement Reference = ReferenceData.ReadJson("cross_validation.json");

    private static CrossValidationResult RunOnReferenceFolds()
    {
        ReferenceTable table = ReferenceData.ReadCsv("anes96.csv");
        string[] features = Reference.GetProperty("features").EnumerateArray().Select(f => f.GetString()!).ToArray();
        double[][] x = table.Columns(features);
        int[] y = table.Column("label").Select(v => (int)v).ToArray();
        int[][] assignments = Reference.GetProperty("assignment").EnumerateArray()
            .Select(r => r.EnumerateArray().Select(f => f.GetInt32()).ToArray()).ToArray();

        CrossValidationResult? result = CrossValidation.Run(y, assignments, Reference.GetProperty("seed").GetInt32(), (train, test) =>
        {
            LogisticFitResult fit = LogisticNewtonFit.Fit(train.Select(i => x[i]).ToArray(), train.Select(i => (double)y[i]).ToArray());
            if (!fit.Converged)
            {
                return (null, fit.Problem);
            }

            return (test.Select(i => LogisticMath.Probability(fit.Intercept + x[i].Select((v, j) => v * fit.Coefficients[j]).Sum())).ToArray(), null);
        }, out string? problem);
        Assert.True(result is not null, problem);
        return result;
    }

    [Fact]
    public void Run_SklearnFolds_EveryFoldMatchesScikitLearn()
    {
        CrossValidationResult result = RunOnReferenceFolds();
        JsonElement[] expected = Reference.GetProperty("per_fold").EnumerateArray().ToArray();

        Assert.Equal(100, result.PerFold.Count);
        for (int k = 0; k < expected.Length; k++)
        {
            CrossValidationFold fold = result.PerFold[k];
            JsonElement e = expected[k];
            Assert.Equal(e.GetProperty("repeat").GetInt32(), fold.Repeat);
            Assert.Equal(e.GetProperty("fold").GetInt32(), fold.Fold);
            Assert.Equal(e.GetProperty("n").GetInt32(), fold.Count);
            // Both fits converge to 1e-12; figures agree far below the 0.5 points.
            Assert.Equal(e.GetProperty("log_loss").GetDouble(), fold.Model.LogLoss, 1e-7);
            Assert.Equal(e.GetProperty("brier").GetDouble(), fold.Model.Brier, 1e-8);
            Assert.Equal(e.GetProperty("ece").GetDouble(), fold.Model.Ece, 1e-7);
            Assert.Equal(e.GetProperty("auc").GetDouble(), fold.Model.Auc, 1e-12);
            Assert.Equal(e.GetProperty("accuracy").GetDouble(), fold.Model.Accuracy, 1e-12);
            JsonElement prior = e.GetProperty("prior");
            Assert.Equal(prior.GetProperty("log_loss").GetDouble(), fold.Prior.LogLoss, 1e-12);
            Assert.Equal(prior.GetProperty("brier").GetDouble(), fold.Prior.Brier, 1e-12);
            Assert.Equal(prior.GetProperty("ece").GetDouble(), fold.Prior.Ece, 1e-12);
            Assert.Equal(prior.GetProperty("accuracy").GetDouble(), fold.Prior.Accuracy, 1e-12);
        }
    }

    [Fact]
    public void Run_SklearnFolds_MeansAndSpreadsMatchScikitLearn()
    {
        CrossValidationResult result = RunOnReferenceFolds();
        JsonElement summary = Reference.GetProperty("summary");
        JsonElement priorSummary = Reference.GetProperty("prior_summary");

        Check(summary.GetProperty("log_loss"), result.Model(s => s.LogLoss), 1e-7);
        Check(summary.GetProperty("brier"), result.Model(s => s.Brier), 1e-8);
        Check(summary.GetProperty("ece"), result.Model(s => s.Ece), 1e-7);
        Check(summary.GetProperty("auc"), result.Model(s => s.Auc), 1e-12);
        Check(summary.GetProperty("accuracy"), result.Model(s => s.Accuracy), 1e-12);
        Check(priorSummary.GetProperty("log_loss"), result.Prior(s => s.LogLoss), 1e-12);
        // cross_val_score's own means (accuracy and neg_log_loss scoring) on the same splits.
        JsonElement scores = Reference.GetProperty("cross_val_score");
        Assert.Equal(scores.GetProperty("accuracy_mean").GetDouble(), result.Model(s => s.Accuracy).Mean, 1e-12);
        Assert.Equal(scores.GetProperty("log_loss_mean").GetDouble(), result.Model(s => s.LogLoss).Mean, 1e-7);
        double skill = 1 - (summary.GetProperty("log_loss").GetProperty("mean").GetDouble() / priorSummary.GetProperty("log_loss").GetProperty("mean").GetDouble());
        Assert.Equal(skill, result.Skill(s => s.LogLoss), 1e-6);
    }

    private static void Check(JsonElement expected, MetricSummary actual, double tolerance)
    {
        Assert.Equal(expected.GetProperty("mean").GetDouble(), actual.Mean, tolerance);
        Assert.Equal(expected.GetProperty("sd").GetDouble(), actual.Sd, tolerance);
        Assert.Equal(expected.GetProperty("sd_of_repeat_means").GetDouble(), actual.SdOfRepeatMeans, tolerance);
    }

    [Fact]
    public void Run_SklearnFoldsMulticlass_EveryFoldMatchesScikitLearnsMultinomialLogit()
    {
        // The multinomial logit of mnlogit_anes96.json, cross-validated on scikit-learn's folds
        // (cross_validation.json "multiclass"): log-loss by sklearn log_loss, Brier summed over
        // the classes, top-label ECE, accuracy of the most probable class.
        JsonElement reference = Reference.GetProperty("multiclass");
        ReferenceTable table = ReferenceData.ReadCsv("anes96.csv");
        double[][] x = table.Rows.Select(r => new[]
        {
            Math.Log(r[table.IndexOf("popul")] + 0.1), r[table.IndexOf("selfLR")], r[table.IndexOf("age")],
            r[table.IndexOf("educ")], r[table.IndexOf("income")],
        }).ToArray();
        int[] y = table.Column("PID").Select(v => (int)v).ToArray();
        int[][] assignments = reference.GetProperty("assignment").EnumerateArray()
            .Select(r => r.EnumerateArray().Select(f => f.GetInt32()).ToArray()).ToArray();
        string[] names = ["logpopul", "selfLR", "age", "educ", "income"];

        CrossValidationResult? result = CrossValidation.Run(y, assignments, reference.GetProperty("seed").GetInt32(),
            MultinomialFoldFit.Step(x, y, 7, 0, names), out string? problem, classCount: 7);

        Assert.True(result is not null, problem);
        JsonElement[] expected = reference.GetProperty("per_fold").EnumerateArray().ToArray();
        Assert.Equal(expected.Length, result.PerFold.Count);
        for (int k = 0; k < expected.Length; k++)
        {
            CrossValidationFold fold = result.PerFold[k];
            JsonElement e = expected[k];
            Assert.Equal(e.GetProperty("n").GetInt32(), fold.Count);
            Assert.Equal(e.GetProperty("log_loss").GetDouble(), fold.Model.LogLoss, 1e-6);
            Assert.Equal(e.GetProperty("brier").GetDouble(), fold.Model.Brier, 1e-6);
            Assert.Equal(e.GetProperty("ece").GetDouble(), fold.Model.Ece, 1e-6);
            Assert.Equal(e.GetProperty("accuracy").GetDouble(), fold.Model.Accuracy, 1e-12);
            JsonElement prior = e.GetProperty("prior");
            Assert.Equal(prior.GetProperty("log_loss").GetDouble(), fold.Prior.LogLoss, 1e-12);
            Assert.Equal(prior.GetProperty("brier").GetDouble(), fold.Prior.Brier, 1e-12);
            Assert.Equal(prior.GetProperty("ece").GetDouble(), fold.Prior.Ece, 1e-12);
            Assert.Equal(prior.GetProperty("accuracy").GetDouble(), fold.Prior.Accuracy, 1e-12);
        }
    }
}
