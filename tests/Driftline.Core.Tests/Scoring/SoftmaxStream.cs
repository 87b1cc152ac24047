using System.Globalization;

namespace Driftline.Core.Tests.Scoring;

/// <summary>
/// Events drawn from a known softmax model over four invented delivery outcomes: one numeric
/// feature, one categorical with three levels and a boolean. Generated in the test (seeded);
/// used for properties of the learner as a method, not as reference values.
/// </summary>
internal sealed class SoftmaxStream(int seed)
{
    public static readonly string[] Classes = ["on-time", "late", "failed", "cancelled"];
    private static readonly string[] Levels = ["north", "river", "hill"];
    // Margins per class (the first class is the base, all zero).
    private static readonly double[] Intercept = [0, -0.8, -2.2, -2.6];
    private static readonly double[] Distance = [0, 0.45, 0.2, -0.1];
    private static readonly double[][] Level = [[0, 0, 0], [0, 0.7, -0.4], [0, -0.3, 0.9], [0, 0.2, 0.1]];
    private static readonly double[] Raining = [0, 0.9, 0.3, 0.5];
    private readonly Random _random = new(seed);

    /// <summary>Added to the margin of <see cref="ShiftClass"/> (a one-class break).</summary>
    public double Shift { get; set; }

    /// <summary>The class the shift applies to.</summary>
    public int ShiftClass { get; set; } = 1;

    /// <summary>One event: its JSON line, the true class probabilities, the drawn class and its features as a dense row (distance, zone=river, zone=hill, raining).</summary>
    public (string Json, double[] TrueP, int Label, double[] Dense) Next(int n, bool withLabel = true)
    {
        double distance = 3 + 1.5 * Normal();
        int level = _random.Next(Levels.Length);
        bool raining = _random.NextDouble() < 0.3;
        var p = new double[Classes.Length];
        double sum = 0;
        for (int k = 0; k < p.Length; k++)
        {
            double m = Intercept[k] + Distance[k] * (distance - 3) + Level[k][level] + (raining ? Raining[k] : 0) + (k == ShiftClass ? Shift : 0);
            p[k] = Math.Exp(m);
            sum += p[k];
        }
        for (int k = 0; k < p.Length; k++)
        {
            p[k] /= sum;
        }
        double u = _random.NextDouble();
        int y = 0;
        for (double c = p[0]; y < p.Length - 1 && u >= c; c += p[++y])
        {
        }
        var ci = CultureInfo.InvariantCulture;
        string label = withLabel ? $",\"label\":\"{Classes[y]}\"" : "";
        string json = string.Create(ci, $"{{\"id\":\"e{n}\",\"features\":{{\"distance_km\":{distance:R},\"zone\":\"{Levels[level]}\",\"raining\":{(raining ? "true" : "false")}}}{label}}}");
        return (json, p, y, [distance, level == 1 ? 1 : 0, level == 2 ? 1 : 0, raining ? 1 : 0]);
    }

    private double Normal()
    {
        double u1 = 1 - _random.NextDouble();
        double u2 = _random.NextDouble();
        return Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }
}
