using System.Globalization;

namespace Driftline.Core.Tests.Scoring;

/// <summary>
/// Events drawn from a known logistic model, for checks of the learner as a method: two
/// numeric features on very different raw scales, one categorical with five levels and a
/// boolean. Generated in the test (seeded); invented, used for properties, not as reference values.
/// </summary>
internal sealed class KnownModelStream(int seed)
{
    private static readonly string[] Levels = ["a", "b", "c", "d", "e"];
    private static readonly double[] LevelEffect = [0.0, 0.8, -0.6, 0.3, -1.1];
    private readonly Random _random = new(seed);

    /// <summary>Shift added to the true log-odds (to simulate a break).</summary>
    public double Shift { get; set; }

    /// <summary>One event: its JSON line, the true probability and the drawn label.</summary>
    public (string Json, double TrueP, int Label, double[] Dense) Next(int n, bool withLabel = true)
    {
        double amount = 1000 + 400 * Normal();          // values in the thousands
        double ratio = 0.01 + 0.004 * Normal();         // values near 0.01
        int level = _random.Next(Levels.Length);
        bool flag = _random.NextDouble() < 0.3;
        double logOdds = -0.4 + 0.002 * (amount - 1000) - 150 * (ratio - 0.01) + LevelEffect[level] + (flag ? 0.7 : 0) + Shift;
        double p = 1 / (1 + Math.Exp(-logOdds));
        int y = _random.NextDouble() < p ? 1 : 0;
        var c = CultureInfo.InvariantCulture;
        string label = withLabel ? $",\"label\":{y}" : "";
        string json = $"{{\"id\":\"e{n}\",\"features\":{{\"amount\":{amount.ToString("R", c)},\"ratio\":{ratio.ToString("R", c)},\"level\":\"{Levels[level]}\",\"flag\":{(flag ? "true" : "false")}}}{label}}}";
        double[] dense = [amount, ratio, level == 1 ? 1 : 0, level == 2 ? 1 : 0, level == 3 ? 1 : 0, level == 4 ? 1 : 0, flag ? 1 : 0];
        return (json, p, y, dense);
    }

    private double Normal() => Math.Sqrt(-2 * Math.Log(1 - _random.NextDouble())) * Math.Cos(2 * Math.PI * _random.NextDouble());
}
