using System.Globalization;
using System.Text;

namespace Driftline.Benchmarks;

/// <summary>
/// A wide, high-cardinality order stream in the demo's invented food-delivery setting, for
/// benchmarks: about 200 bytes an event, every label inline, eleven features. Low-cardinality
/// categoricals (30 cities, 4 devices, 6 app versions, 50 cuisines, an os string), a restaurant
/// out of 200,000 and a customer out of 1,000,000 drawn Zipf-like, and four numbers (basket,
/// hour, items, account age). Invented data; seeded, so every run writes the same file.
/// </summary>
internal sealed class WideStream(int seed)
{
    private const int Restaurants = 200_000;
    private const int Customers = 1_000_000;
    private static readonly string[] Devices = ["phone", "tablet", "web", "watch"];
    private static readonly string[] Systems = ["os-a 17", "os-a 18", "os-b 14", "os-b 15", "desktop"];
    private readonly Random _random = new(seed);

    /// <summary>Writes <paramref name="events"/> lines to <paramref name="path"/>.</summary>
    public void Write(string path, int events)
    {
        double[] restaurants = ZipfTable(Restaurants, 1.05);
        double[] customers = ZipfTable(Customers, 1.0);
        using var writer = new StreamWriter(path, append: false, new UTF8Encoding(false), 1 << 16);
        var c = CultureInfo.InvariantCulture;
        for (int n = 0; n < events; n++)
        {
            int city = _random.Next(30), device = _random.Next(Devices.Length), app = _random.Next(6), cuisine = _random.Next(50);
            int os = _random.Next(Systems.Length);
            int restaurant = Draw(restaurants), customer = Draw(customers);
            double basket = Math.Round(Math.Exp(3.2 + 0.6 * Normal()), 2);
            int hour = _random.Next(24), items = 1 + _random.Next(9), age = _random.Next(3_000);
            // The truth: a little from each field, a hashed effect per restaurant and customer.
            double logOdds = -1.4 + 0.02 * (city - 15) + 0.1 * device - 0.05 * app + 0.01 * (cuisine - 25)
                + 0.3 * Effect(restaurant, 11) + 0.2 * Effect(customer, 13) + 0.004 * (basket - 25)
                + (hour is >= 18 and <= 21 ? 0.4 : 0) + 0.05 * items - 0.0001 * age;
            int label = _random.NextDouble() < 1 / (1 + Math.Exp(-logOdds)) ? 1 : 0;
            writer.Write(string.Create(c,
                $"{{\"id\":\"w-{n}\",\"features\":{{\"city\":\"city-{city}\",\"device\":\"{Devices[device]}\",\"app\":\"v{app}\",\"cuisine\":\"cu-{cuisine}\",\"os\":\"{Systems[os]}\",\"restaurant\":\"r-{restaurant}\",\"customer\":\"u-{customer}\",\"basket\":{basket},\"hour\":{hour},\"items\":{items},\"account_age_days\":{age}}},\"label\":{label}}}\n"));
        }
    }

    // Cumulative weights of ranks 1..n under 1/k^s, for inverse-transform draws.
    private static double[] ZipfTable(int n, double s)
    {
        var cumulative = new double[n];
        double total = 0;
        for (int k = 0; k < n; k++)
        {
            total += 1 / Math.Pow(k + 1, s);
            cumulative[k] = total;
        }
        for (int k = 0; k < n; k++)
        {
            cumulative[k] /= total;
        }
        return cumulative;
    }

    private int Draw(double[] cumulative)
    {
        int i = Array.BinarySearch(cumulative, _random.NextDouble());
        return i >= 0 ? i : Math.Min(~i, cumulative.Length - 1);
    }

    private static double Effect(int id, int salt) => ((id * 2_654_435_761u + (uint)salt) % 1000) / 500.0 - 1.0;

    private double Normal() => Math.Sqrt(-2 * Math.Log(1 - _random.NextDouble())) * Math.Cos(2 * Math.PI * _random.NextDouble());
}
