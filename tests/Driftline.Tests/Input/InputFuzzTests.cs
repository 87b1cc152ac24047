using System.Globalization;
using System.Text;
using System.Text.Json;
using Driftline.Tests.Cli;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Input;

/// <summary>
/// Fuzzing with a fixed seed: well-formed food-delivery records mutated in the ways a hostile
/// feed breaks them. The run must complete and account for every non-blank line exactly once:
/// scored, a label applied, or a dead letter (from the summary's counts).
/// </summary>
public sealed class InputFuzzTests
{
    private const int Lines = 120_000;
    private const int Seed = 20_261_202;

    private static readonly string[] Zones = ["riverside", "old-town", "harbour", "hillside", "market"];

    private static readonly string[] Kinds =
    [
        "good", "flip", "truncate", "nest", "number", "surrogate", "utf8", "control", "duplicate-key", "wrong-type",
        "long-text", "far-future", "repeat-id",
    ];

    /// <summary>The fuzzed file, with how many lines of each kind it holds.</summary>
    private static (byte[] File, long NonBlank, Dictionary<string, int> Counts) Build()
    {
        var random = new Random(Seed);
        var output = new MemoryStream();
        var counts = Kinds.ToDictionary(k => k, _ => 0);
        var waiting = new List<string>();
        long nonBlank = 0;
        var start = new DateTime(2026, 3, 4, 11, 0, 0, DateTimeKind.Utc);
        for (int i = 0; i < Lines; i++)
        {
            string good;
            if (waiting.Count > 0 && random.NextDouble() < 0.3)
            {
                // A late label for an order scored earlier (sometimes for one already labelled).
                int at = random.Next(waiting.Count);
                good = $"{{\"id\":\"{waiting[at]}\",\"time\":\"{Time(start, i)}\",\"label\":{random.Next(2)}}}";
                if (random.NextDouble() < 0.9)
                {
                    waiting.RemoveAt(at);
                }
            }
            else
            {
                string id = $"o-{i}";
                bool inline = random.NextDouble() < 0.5;
                bool probability = random.NextDouble() < 0.1;
                string body = probability
                    ? string.Create(CultureInfo.InvariantCulture, $"\"p\":{random.NextDouble():0.####}")
                    : string.Create(CultureInfo.InvariantCulture,
                        $"\"features\":{{\"zone\":\"{Zones[random.Next(Zones.Length)]}\",\"distance_km\":{random.NextDouble() * 12:0.##},\"items\":{random.Next(1, 9)},\"raining\":{(random.Next(2) == 0 ? "true" : "false")},\"tags\":[\"dessert\",\"large-order\"]}}");
                good = $"{{\"id\":\"{id}\",\"time\":\"{Time(start, i)}\",\"key\":\"city-{i % 3}\",{body}{(inline ? $",\"label\":{random.Next(2)}" : "")}}}";
                if (!inline)
                {
                    waiting.Add(id);
                }
            }
            string kind = i < 10 ? "good" : Kinds[random.Next(Kinds.Length)];
            counts[kind]++;
            byte[] line = Mutate(kind, good, random, waiting, i);
            output.Write(line);
            output.WriteByte((byte)'\n');
            var text = line.AsSpan();
            if (!text.IsEmpty && text[^1] == (byte)'\r')
            {
                text = text[..^1];
            }
            nonBlank += text.Trim(" \t"u8).IsEmpty ? 0 : 1;
        }
        // A few lines over Input:MaxLineBytes (1 MiB), as the issue's oversized lines.
        for (int i = 0; i < 12; i++)
        {
            output.Write(Encoding.UTF8.GetBytes($"{{\"id\":\"huge-{i}\",\"features\":{{\"note\":\"{new string('n', (1 << 20) + i * 1000)}\"}}}}\n"));
            nonBlank++;
        }
        return (output.ToArray(), nonBlank, counts);
    }

    private static string Time(DateTime start, int i) => start.AddSeconds(i * 3).ToString("yyyy-MM-ddTHH:mm:ss.fffZ", CultureInfo.InvariantCulture);

    private static byte[] Mutate(string kind, string good, Random random, List<string> waiting, int i)
    {
        byte[] bytes = Encoding.UTF8.GetBytes(good);
        switch (kind)
        {
            case "flip":
                for (int n = random.Next(1, 4); n > 0; n--)
                {
                    int at = random.Next(bytes.Length);
                    bytes[at] ^= (byte)(1 << random.Next(8));
                    if (bytes[at] == (byte)'\n')
                    {
                        // A line break would make two lines of one: the count below is per line.
                        bytes[at] = (byte)'#';
                    }
                }
                return bytes;
            case "truncate":
                return bytes[..random.Next(bytes.Length)];
            case "nest":
                int depth = random.Next(2) == 0 ? random.Next(60, 70) : random.Next(100, 2_000);
                string open = random.Next(2) == 0 ? new string('[', depth) : string.Concat(Enumerable.Repeat("{\"a\":", depth));
                string close = open[0] == '[' ? new string(']', depth) : new string('}', depth);
                return Encoding.UTF8.GetBytes(good.Insert(1, $"\"deep\":{open}1{close},"));
            case "number":
                string[] odd = ["1e400", "-1e400", "1e-400", "123456789012345678901234567890", "-0", "0.0000000000000000000001", "1E+308", "2.5e-324"];
                string value = odd[random.Next(odd.Length)];
                return Encoding.UTF8.GetBytes(random.Next(3) switch
                {
                    0 => good.Replace("\"items\":", "\"items\":" + value + ",\"was_items\":", StringComparison.Ordinal),
                    1 => good.Contains("\"label\":", StringComparison.Ordinal) ? good.Replace("\"label\":", "\"label\":" + value + ",\"was\":", StringComparison.Ordinal) : good.Insert(good.Length - 1, ",\"label\":" + value),
                    _ => good.Insert(good.Length - 1, ",\"p\":" + value),
                });
            case "surrogate":
                string lone = random.Next(2) == 0 ? "\\ud800" : "\\udfff";
                string[] places = ["\"id\":\"", "\"key\":\"", "\"zone\":\"", "\"dessert", "\"time\":\"2026", "\"features\":{\"z"];
                string place = places[random.Next(places.Length)];
                int where = good.IndexOf(place, StringComparison.Ordinal);
                return Encoding.UTF8.GetBytes(where < 0 ? good.Insert(2, lone) : good.Insert(where + place.Length, lone));
            case "utf8":
                byte[][] invalid = [[0xFF], [0xC3], [0xE2, 0x82], [0xED, 0xA0, 0x80], [0xC0, 0xAF], [0xF8, 0x88, 0x80, 0x80, 0x80]];
                int cut = random.Next(1, bytes.Length);
                return [.. bytes[..cut], .. invalid[random.Next(invalid.Length)], .. bytes[cut..]];
            case "control":
                byte c = (byte)random.Next(0, 32);
                c = c == (byte)'\n' ? (byte)0 : c;
                int pos = random.Next(1, bytes.Length);
                return [.. bytes[..pos], c, .. bytes[pos..]];
            case "duplicate-key":
                return Encoding.UTF8.GetBytes(random.Next(3) switch
                {
                    0 => good.Insert(1, $"\"id\":\"dup-{i}\","),
                    1 => good.Replace("\"zone\":", "\"zone\":\"twice\",\"zone\":", StringComparison.Ordinal),
                    _ => good.Insert(good.Length - 1, ",\"label\":1,\"label\":0"),
                });
            case "wrong-type":
                string[] wrong = ["\"id\":7,", "\"features\":[1,2],", "\"label\":\"yes\",", "\"time\":12345,", "\"key\":{\"k\":1},", "\"p\":\"0.5\",", "\"features\":{\"zone\":{\"x\":1}},", "\"features\":{\"tags\":[1]},"];
                return Encoding.UTF8.GetBytes(good.Insert(good.Length - 1, "," + wrong[random.Next(wrong.Length)].TrimEnd(',')));
            case "long-text":
                return Encoding.UTF8.GetBytes(good.Replace("riverside", new string('r', random.Next(1_000, 5_000)), StringComparison.Ordinal)
                    .Replace("\"id\":\"o-", "\"id\":\"" + new string('o', random.Next(0, 2) * 2_000) + "o-", StringComparison.Ordinal));
            case "far-future":
                return Encoding.UTF8.GetBytes(System.Text.RegularExpressions.Regex.Replace(good, "\"time\":\"[^\"]*\"", "\"time\":\"9999-12-31T23:59:59Z\""));
            case "repeat-id":
                return Encoding.UTF8.GetBytes(waiting.Count > 0 && good.Contains("\"features\"", StringComparison.Ordinal)
                    ? System.Text.RegularExpressions.Regex.Replace(good, "\"id\":\"[^\"]*\"", $"\"id\":\"{waiting[0]}\"")
                    : good);
            default:
                return bytes;
        }
    }

    [Fact]
    public async Task Replay_FuzzedLines_CompletesAndAccountsForEveryLineOnce()
    {
        var (file, nonBlank, counts) = Build();
        Assert.All(counts, kv => Assert.True(kv.Value > 5_000, $"{kv.Key}: {kv.Value} lines"));
        using var dir = new TempFolder();
        File.WriteAllBytes(dir.File("fuzz.jsonl"), file);

        var replay = await CliRun.RunAsync("replay", dir.File("fuzz.jsonl"), "--out", dir.File("replay"));
        Assert.True(replay.ExitCode == 0, replay.Error);
        var summary = JsonDocument.Parse(File.ReadAllText(dir.File("replay/summary.json"))).RootElement;
        long scored = summary.GetProperty("events").GetInt64() + summary.GetProperty("probabilities").GetInt64();
        long joined = summary.GetProperty("late_labels").GetInt64();
        long dead = summary.GetProperty("dead_letters").GetInt64();
        TestContext.Current.SendDiagnosticMessage($"{nonBlank:N0} lines: {scored:N0} scored, {joined:N0} late labels joined, {dead:N0} dead letters, {summary.GetProperty("clamped_times").GetInt64():N0} clamped");
        Assert.Equal(nonBlank, scored + joined + dead);
        Assert.Equal(dead, File.ReadLines(dir.File("replay/dead-letters.jsonl")).LongCount());
        // Every kind of damage was met: the fuzzing did reach the parser's refusals.
        Assert.True(dead > Lines / 3, $"{dead} dead letters");
        Assert.True(summary.GetProperty("clamped_times").GetInt64() > 0);

        var monitor = await CliRun.RunAsync("monitor", dir.File("fuzz.jsonl"), "--out", dir.File("monitor"));
        Assert.True(monitor.ExitCode == 0, monitor.Error);
        var watched = JsonDocument.Parse(File.ReadAllText(dir.File("monitor/summary.json"))).RootElement;
        Assert.Equal(nonBlank, watched.GetProperty("probabilities").GetInt64() + watched.GetProperty("late_labels").GetInt64() + watched.GetProperty("dead_letters").GetInt64());

        // fit reads the same file: it fits, or refuses in one line (flipped bytes make thousands
        // of distinct categories, more than a batch fit takes: exit 6, data that cannot be
        // fitted), never a stack trace.
        // The first 10,000 lines and the oversized ones keep its dense Newton steps short.
        var head = file.AsSpan(0, IndexOfNth(file, (byte)'\n', 10_000) + 1).ToArray().Concat(file.AsSpan(IndexOfNth(file, (byte)'\n', Lines) + 1).ToArray()).ToArray();
        File.WriteAllBytes(dir.File("fit.jsonl"), head);
        var fit = await CliRun.RunAsync("fit", dir.File("fit.jsonl"), "--out", dir.File("fit.json"), "--ridge", "1");
        Assert.True(fit.ExitCode is 0 or 4 or 6, fit.Error);
        Assert.DoesNotContain("   at ", fit.Error, StringComparison.Ordinal);
        TestContext.Current.SendDiagnosticMessage($"fit: exit {fit.ExitCode}, {fit.Error.Trim()}");
    }

    private static int IndexOfNth(byte[] bytes, byte value, int n)
    {
        int at = -1;
        for (int k = 0; k < n; k++)
        {
            at = Array.IndexOf(bytes, value, at + 1);
        }
        return at;
    }
}
