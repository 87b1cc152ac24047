using System.Globalization;
using System.Reflection;
using System.Text.Json;

namespace Driftline.Core.Tests.Metrics;

/// <summary>A data set with its reference maximum-likelihood logistic fit, as in Reference/fits.json.</summary>
internal sealed record LogisticCase(string Name, double[][] Features, int[] Labels, double Intercept, double[] Coefficients,
    double MeanLogLoss, double Brier)
{
    /// <summary>The fitted probability of each row, σ(b0 + x · w).</summary>
    public double[] FittedProbabilities() => Features
        .Select(x => 1.0 / (1.0 + Math.Exp(-(Intercept + x.Zip(Coefficients, (a, b) => a * b).Sum()))))
        .ToArray();
}

/// <summary>
/// Reads the embedded spector/anes96 data and their statsmodels fits (Reference/README.md names
/// the sources). Kept apart from ReferenceData.cs of other test areas so branches do not clash.
/// </summary>
internal static class LogisticReference
{
    /// <summary>Source named beside checks against these values.</summary>
    public const string Source = "statsmodels 0.13.5 Logit / scikit-learn 1.2.1 via Reference/fits.json";

    private static readonly Lazy<LogisticCase> SpectorCase = new(() => Load("spector", "spector.csv"));
    private static readonly Lazy<LogisticCase> AnesCase = new(() => Load("anes96", "anes96.csv"));

    /// <summary>Spector &amp; Mazzeo (1980), 32 rows.</summary>
    public static LogisticCase Spector => SpectorCase.Value;

    /// <summary>ANES 1996, 944 rows.</summary>
    public static LogisticCase Anes96 => AnesCase.Value;

    /// <summary>Either case by its name in fits.json.</summary>
    public static LogisticCase Get(string name) => name switch
    {
        "spector" => Spector,
        "anes96" => Anes96,
        _ => throw new ArgumentOutOfRangeException(nameof(name), name, "No such reference fit."),
    };

    private static LogisticCase Load(string name, string csv)
    {
        using JsonDocument fits = JsonDocument.Parse(Resource("fits.json"));
        JsonElement fit = fits.RootElement.GetProperty(name);
        string[] features = fit.GetProperty("features").EnumerateArray().Select(e => e.GetString()!).ToArray();
        JsonElement coefficients = fit.GetProperty("coefficients");
        JsonElement metrics = fit.GetProperty("training_metrics");

        using var reader = new StreamReader(Resource(csv));
        string[] header = reader.ReadLine()!.Split(',');
        int[] columns = features.Select(f => Array.IndexOf(header, f)).ToArray();
        int labelColumn = Array.IndexOf(header, "label");
        var rows = new List<double[]>();
        var labels = new List<int>();
        while (reader.ReadLine() is { Length: > 0 } line)
        {
            string[] cells = line.Split(',');
            rows.Add(columns.Select(c => double.Parse(cells[c], CultureInfo.InvariantCulture)).ToArray());
            labels.Add(int.Parse(cells[labelColumn], CultureInfo.InvariantCulture));
        }

        return new LogisticCase(
            name,
            rows.ToArray(),
            labels.ToArray(),
            fit.GetProperty("intercept").GetDouble(),
            features.Select(f => coefficients.GetProperty(f).GetDouble()).ToArray(),
            metrics.GetProperty("mean_log_loss_sklearn").GetDouble(),
            metrics.GetProperty("brier_score").GetDouble());
    }

    private static Stream Resource(string name) =>
        Assembly.GetExecutingAssembly().GetManifestResourceStream(name)
        ?? throw new InvalidOperationException($"Embedded resource {name} is missing.");
}
