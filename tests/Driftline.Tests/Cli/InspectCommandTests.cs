using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

public sealed class InspectCommandTests(DemoReplay replay) : IClassFixture<DemoReplay>
{
    [Fact]
    public async Task Inspect_ReplayedModel_ShowsVersionCountsNamedWeightsAndSettings()
    {
        var (code, stdout, stderr) = await TestCli.RunAsync("inspect", Path.Combine(replay.Output, "model.json"), "--top", "15");

        Assert.True(code == 0, stderr);
        Assert.Contains("version", stdout, StringComparison.Ordinal);
        Assert.Contains("events scored", stdout, StringComparison.Ordinal);
        Assert.Contains("intercept ", stdout, StringComparison.Ordinal);
        Assert.DoesNotContain("(bias)", stdout, StringComparison.Ordinal);
        // Names survive hashing: the demo's categorical features show as name=value.
        Assert.Matches(@"(zone|courier|hour)=\S+\s+[+-]\d\.\d{4}", stdout);
        Assert.DoesNotContain("unnamed slot", stdout, StringComparison.Ordinal);
        Assert.Contains("Settings it was trained with", stdout, StringComparison.Ordinal);
        Assert.Contains("AdaGrad", stdout, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Inspect_TopThree_ListsThreeWeights()
    {
        var (_, stdout, _) = await TestCli.RunAsync("inspect", Path.Combine(replay.Output, "model.json"), "--top", "3");

        var table = stdout.Split('\n').SkipWhile(l => !l.StartsWith("Weights", StringComparison.Ordinal)).Skip(3).TakeWhile(l => l.Trim().Length > 0);
        Assert.Equal(3, table.Count());
    }

    [Theory]
    [InlineData("\"learner\":\"AdaGrad\"", "\"learner\":\"5\"")]
    [InlineData("\"learner\":\"AdaGrad\"", "\"learner\":1")]
    [InlineData("\"scaling\":\"Online\"", "\"scaling\":\"3\"")]
    public async Task Inspect_EnumSavedAsANumber_IsRefusedAsDamaged(string name, string number)
    {
        // Issue 12 item 10 (names only, everywhere an enum is bound): a saved model's learner
        // or scaling mode given as a number used to load as a member that does not exist.
        using var dir = new TempFolder();
        string json = File.ReadAllText(Path.Combine(replay.Output, "model.json"));
        Assert.Contains(name, json, StringComparison.Ordinal);
        File.WriteAllText(dir.File("m.json"), json.Replace(name, number, StringComparison.Ordinal));

        var (code, _, stderr) = await TestCli.RunAsync("inspect", dir.File("m.json"));

        Assert.Equal(4, code);
        Assert.Single(stderr.TrimEnd().Split('\n'));
        // In the user's terms: the field and the names it takes, not a .NET type name.
        Assert.DoesNotContain("Driftline.Core", stderr, StringComparison.Ordinal);
        Assert.Contains(name.Split(':')[0].Trim('"'), stderr, StringComparison.Ordinal);
        Assert.Contains(name.Split(':')[1].Trim('"'), stderr, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Inspect_NotAModel_IsAnInputError()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("x.json"), "{\"format\":\"something-else\"}");

        var (code, _, stderr) = await TestCli.RunAsync("inspect", dir.File("x.json"));

        Assert.Equal(4, code);
        Assert.Contains("not a Driftline model snapshot", stderr, StringComparison.Ordinal);
    }
}
