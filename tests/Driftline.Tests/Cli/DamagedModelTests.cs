using System.Text.Json.Nodes;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>
/// A model.json damaged in meaning (it still parses) is refused when loaded, by <c>inspect</c>
/// and by <c>replay --warm-start</c> alike: exit 4 and one line naming what is wrong, never a
/// stack trace and never a model that loads and fails on the first graded event.
/// </summary>
public sealed class DamagedModelTests
{
    public static TheoryData<string, string> Damage() => new()
    {
        { "duplicate-slot", "slot" },
        { "slot-out-of-range", "is outside the 262,144 slots" },
        { "hash-bits-disagree", "is outside the 1,024 slots of its Model:HashBits 10" },
        { "arrays-differ", "values in first, second and third" },
        { "null-models", "models is missing (null)" },
        { "null-options", "options is missing (null)" },
        { "null-learner", "models[0].learner is missing (null)" },
        { "null-pending", "pending is missing (null)" },
        { "null-model-section", "section 'model' is missing" },
        { "duplicated-model-key", "is the key of an earlier model too" },
        { "duplicated-property", "duplicate" },
        { "more-than-max-models", "more than its Model:MaxModels of 1" },
        { "weight-nan", "models[0].learner.first[0] is NaN" },
        { "weight-infinite", "is Infinity" },
        { "weight-1e308", "beyond ±1e9" },
        { "weight-absurd", "beyond ±1e9" },
        { "negative-squares", "negative or non-finite accumulated gradient" },
        { "pending-model-index", "names model 7" },
        { "null-pending-entry", "pending[0]" },
        { "prior-impossible", "counts are impossible" },
    };

    private static string Damaged(string healthy, string shape)
    {
        var root = JsonNode.Parse(healthy)!.AsObject();
        var model = root["models"]![0]!.AsObject();
        var learner = model["learner"]!.AsObject();
        var slots = learner["slots"]!.AsArray();
        var first = learner["first"]!.AsArray();
        switch (shape)
        {
            case "duplicate-slot": slots[1] = slots[0]!.GetValue<int>(); break;
            case "slot-out-of-range": slots[0] = 1 << 18; break;
            case "hash-bits-disagree": root["options"]!["model"]!["hash_bits"] = 10; break;
            case "arrays-differ": first.RemoveAt(first.Count - 1); break;
            case "null-models": root["models"] = null; break;
            case "null-options": root["options"] = null; break;
            case "null-learner": model["learner"] = null; break;
            case "null-pending": root["pending"] = null; break;
            case "null-model-section": root["options"]!["model"] = null; break;
            case "duplicated-model-key": root["models"]!.AsArray().Add(model.DeepClone()); break;
            case "duplicated-property":
                return root.ToJsonString().Replace("\"expired_labels\":", "\"expired_labels\":0,\"expired_labels\":", StringComparison.Ordinal);
            case "more-than-max-models":
                var second = model.DeepClone();
                second["key"] = "city-south";
                root["models"]!.AsArray().Add(second);
                root["options"]!["model"]!["max_models"] = 1;
                break;
            case "weight-nan": first[0] = "NaN"; break;
            case "weight-infinite": first[0] = "Infinity"; break;
            case "weight-1e308": return root.ToJsonString().Replace("\"first\":[", "\"first\":[1e308,", StringComparison.Ordinal).Replace("\"slots\":[", "\"slots\":[1,", StringComparison.Ordinal).Replace("\"second\":[", "\"second\":[0,", StringComparison.Ordinal);
            case "weight-absurd": first[0] = -3.5e10; break;
            case "negative-squares": learner["second"]![0] = -1.0; break;
            case "pending-model-index":
                root["pending"]!.AsArray().Add(new JsonObject { ["id"] = "x", ["model"] = 7, ["time_ticks"] = 0, ["labelled"] = false });
                break;
            case "null-pending-entry": root["pending"]!.AsArray().Insert(0, null); break;
            case "prior-impossible": model["prior_positives"] = model["prior_count"]!.GetValue<long>() + 1; break;
            default: throw new ArgumentOutOfRangeException(nameof(shape), shape, null);
        }
        return root.ToJsonString();
    }

    private static async Task<string> HealthyModelAsync(TempFolder dir)
    {
        File.WriteAllText(dir.File("in.jsonl"), OutputFailureTests.Events(400));
        var run = await CliRun.RunAsync("replay", dir.File("in.jsonl"), "--out", dir.File("out"));
        Assert.True(run.ExitCode == 0, run.Error);
        return File.ReadAllText(dir.File("out/model.json"));
    }

    [Theory]
    [MemberData(nameof(Damage))]
    public async Task LoadingADamagedModel_ExitsFourWithOneLineNamingTheDamage(string shape, string named)
    {
        using var dir = new TempFolder();
        string healthy = await HealthyModelAsync(dir);
        // The healthy model loads both ways, so what follows is the damage's doing.
        File.WriteAllText(dir.File("good.json"), healthy);
        Assert.Equal(0, (await CliRun.RunAsync("inspect", dir.File("good.json"))).ExitCode);

        File.WriteAllText(dir.File("bad.json"), Damaged(healthy, shape));
        foreach (var args in new[]
        {
            new[] { "inspect", dir.File("bad.json") },
            new[] { "replay", dir.File("in.jsonl"), "--out", dir.File("warm"), "--warm-start", dir.File("bad.json") },
        })
        {
            var run = await CliRun.RunAsync(args);
            Assert.True(run.ExitCode == 4, $"{args[0]} {shape}: exit {run.ExitCode}: {run.Error}");
            var lines = run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries);
            Assert.True(lines.Length == 1, run.Error);
            Assert.StartsWith($"driftline: cannot load model '{dir.File("bad.json")}': ", lines[0], StringComparison.Ordinal);
            Assert.Contains(named, lines[0], StringComparison.OrdinalIgnoreCase);
            Assert.Equal("", run.Out);
        }
        Assert.False(Directory.Exists(dir.File("warm")));
    }

    [Fact]
    public async Task FitModel_PassesTheChecks()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("in.jsonl"), string.Join('\n', Enumerable.Range(0, 300).Select(i => $"{{\"id\":\"{i}\",\"features\":{{\"x\":{i % 11}}},\"label\":{(i % 11 + i % 3 > 6 ? 1 : 0)}}}")));
        Assert.Equal(0, (await CliRun.RunAsync("fit", dir.File("in.jsonl"), "--out", dir.File("m.json"))).ExitCode);
        var run = await CliRun.RunAsync("inspect", dir.File("m.json"));
        Assert.True(run.ExitCode == 0, run.Error);
    }
}
