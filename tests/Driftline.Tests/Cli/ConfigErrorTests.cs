using Driftline.Configuration;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Cli;

/// <summary>
/// Configuration mistakes: each refused with exit 3 and one line in the user's terms, naming
/// where it was set (file or environment variable), the option and the fix.
/// </summary>
public sealed class ConfigErrorTests
{
    private static async Task<(CliRun Run, string Path)> CheckAsync(TempFolder dir, string json, Dictionary<string, string?>? environment = null, string command = "check")
    {
        string path = dir.File("x.json");
        File.WriteAllText(path, json);
        string[] args = command == "check" ? ["check", path] : [command, dir.File("none.jsonl"), "--out", dir.File("out"), "--config", path];
        return (await CliRun.RunAsync(args, environment, null), path);
    }

    private static void AssertUserTerms(string error)
    {
        // No binder internals and no .NET type names (issue 14 item 2).
        foreach (var internals in new[] { "System.", "Driftline.Core", "Driftline.Kafka", "BinderOptions", "ErrorOnUnknownConfiguration", "Exception", "   at " })
        {
            Assert.DoesNotContain(internals, error, StringComparison.Ordinal);
        }
    }

    [Theory]
    [InlineData("""{"Model":{"Learner":"5"}}""", "Model:Learner must be one of Ftrl, AdaGrad, not '5'")]
    [InlineData("""{"Model":{"Learner":"1"}}""", "Model:Learner must be one of Ftrl, AdaGrad, not '1'")]
    [InlineData("""{"Model":{"Scaling":"3"}}""", "Model:Scaling must be one of Online, None, not '3'")]
    [InlineData("""{"Model":{"Learner":"Sgd"}}""", "Model:Learner must be one of Ftrl, AdaGrad, not 'Sgd'")]
    [InlineData("""{"Alerts":[{"Name":"a","Metric":"99","Raise":1,"Clear":0.5}]}""", "Alerts:0:Metric must be one of LogLoss, Brier")]
    [InlineData("""{"Alerts":[{"Name":"a","Metric":"Brier","Raise":1,"Clear":0.5,"Severity":"1"}]}""", "Alerts:0:Severity must be one of Warning, Critical, not '1'")]
    [InlineData("""{"Alerts":[{"Name":"a","Metric":"Brier","Raise":1,"Clear":0.5,"Direction":"0"}]}""", "Alerts:0:Direction must be one of Above, Below, not '0'")]
    [InlineData("""{"Alerts":[{"Name":"a","Metric":"Brier","Raise":1,"Clear":0.5,"RelativeTo":"2"}]}""", "Alerts:0:RelativeTo must be one of None, Prior, Reference, not '2'")]
    public async Task Check_EnumGivenAsNumberOrUnknownName_IsRefusedWithTheNames(string json, string expected)
    {
        // Issue 12 item 10: the binder takes "5" for an enum with two members; names only.
        using var dir = new TempFolder();
        var (run, path) = await CheckAsync(dir, json);
        Assert.Equal(3, run.ExitCode);
        Assert.StartsWith($"driftline: config {path}: {expected}", run.Error, StringComparison.Ordinal);
        Assert.Single(run.Error.TrimEnd().Split('\n'));
        AssertUserTerms(run.Error);
    }

    [Fact]
    public async Task Replay_ConfigIsAFolder_SaysItIsAFolder()
    {
        // It used to say the file does not exist, though the path plainly does.
        using var dir = new TempFolder();
        var run = await CliRun.RunAsync(["replay", dir.File("none.jsonl"), "--out", dir.File("out"), "--config", dir.Path], null, null);
        Assert.Equal(3, run.ExitCode);
        Assert.Contains("is a folder, not a file", run.Error, StringComparison.Ordinal);
        Assert.DoesNotContain("does not exist", run.Error, StringComparison.Ordinal);
        Assert.Single(run.Error.TrimEnd().Split('\n'));
    }

    [Fact]
    public async Task Replay_LearnerGivenAsNumber_IsRefusedBeforeReadingInput()
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, """{"Model":{"Learner":"5"}}""", command: "replay");
        Assert.Equal(3, run.ExitCode);
        Assert.Contains("Model:Learner must be one of Ftrl, AdaGrad", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_EnumNameInAnyCase_IsAccepted()
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, """{"Model":{"Learner":"ftrl","Scaling":"none"}}""");
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("FTRL-Proximal", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_EnumNumberFromEnvironment_NamesTheVariable()
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, "{}", new() { ["DRIFTLINE_Model__Scaling"] = "1" });
        Assert.Equal(3, run.ExitCode);
        Assert.Equal("driftline: environment DRIFTLINE_Model__Scaling: Model:Scaling must be one of Online, None, not '1'", run.Error.TrimEnd());
    }

    [Fact]
    public async Task Check_TwoSpellingsOfOneOverride_OneLineConflict()
    {
        // Issue 12 item 11: both spellings used to crash with a duplicate-key exception.
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, "{}", new() { ["DRIFTLINE_Model__HashBits"] = "20", ["driftline_Model__HashBits"] = "22" });
        Assert.Equal(3, run.ExitCode);
        Assert.Equal("driftline: environment variables DRIFTLINE_Model__HashBits and driftline_Model__HashBits both set Model:HashBits, to '20' and '22'; unset one", run.Error.TrimEnd());
    }

    [Fact]
    public async Task Check_ColonAndUnderscoreSpellings_Conflict()
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, "{}", new() { ["DRIFTLINE_Model__HashBits"] = "20", ["DRIFTLINE_Model:HashBits"] = "21" });
        Assert.Equal(3, run.ExitCode);
        Assert.Single(run.Error.TrimEnd().Split('\n'));
        Assert.Contains("both set Model:HashBits", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_SameValueUnderTwoSpellings_IsNoConflict()
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, "{}", new() { ["DRIFTLINE_Model__HashBits"] = "20", ["driftline_model:hashbits"] = "20" });
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("2^20", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_UnrelatedDriftlineVariables_AreIgnored()
    {
        // DRIFTLINE_HOME and the like are not overrides: they name no section.
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, "{}", new() { ["DRIFTLINE_HOME"] = "/opt/driftline", ["DRIFTLINE_VERSION"] = "1", ["DRIFTLINE_TEST__X"] = "y", ["DRIFTLINE_Model:HashBits"] = "20" });
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("2^20", run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Check_MisspeltSectionInVariable_NamesTheVariable()
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, "{}", new() { ["DRIFTLINE_Modle__HashBits"] = "20" });
        Assert.Equal(3, run.ExitCode);
        Assert.Equal("driftline: environment DRIFTLINE_Modle__HashBits: unknown section Modle; did you mean Model?", run.Error.TrimEnd());
    }

    [Theory]
    [InlineData("""{"Kafka":{"Clientt":{"a":"b"}}}""", "unknown option Kafka:Clientt; did you mean Kafka:Client?")]
    [InlineData("""{"Worker":{"MetricsPortt":9464}}""", "unknown option Worker:MetricsPortt; did you mean Worker:MetricsPort?")]
    [InlineData("""{"Worker":{"LogFormat":"xml"}}""", "Worker:LogFormat: 'xml' is not a log format. Use text or json")]
    [InlineData("""{"Worker":{"MetricsPort":"high"}}""", "Worker:MetricsPort must be a whole number, not 'high'")]
    [InlineData("""{"Kafka":{"CheckpointEvery":"soon"}}""", "Kafka:CheckpointEvery must be a duration")]
    [InlineData("""{"Kafka":{"Bootstrap":"127.0.0.1:9092","EventsTopic":""}}""", "Kafka:EventsTopic (--events-topic): is empty")]
    public async Task Check_MistakeInWorkerSections_IsAnError(string json, string expected)
    {
        // Issue 12 item 12: these printed "valid" because check bound the core's sections only.
        using var dir = new TempFolder();
        var (run, path) = await CheckAsync(dir, json);
        Assert.Equal(3, run.ExitCode);
        Assert.StartsWith($"driftline: config {path}: {expected}", run.Error, StringComparison.Ordinal);
        AssertUserTerms(run.Error);
    }

    [Fact]
    public async Task Check_MisspeltOption_OneLineWithTheNearestName()
    {
        using var dir = new TempFolder();
        var (run, path) = await CheckAsync(dir, """{"Model":{"LearningRat":0.1}}""");
        Assert.Equal(3, run.ExitCode);
        Assert.Equal($"driftline: config {path}: unknown option Model:LearningRat; did you mean Model:LearningRate?", run.Error.TrimEnd());
    }

    [Fact]
    public async Task Check_OptionFarFromAnyName_PointsToTheList()
    {
        using var dir = new TempFolder();
        var (run, path) = await CheckAsync(dir, """{"Monitor":{"Colour":"blue"}}""");
        Assert.Equal(3, run.ExitCode);
        Assert.Equal($"driftline: config {path}: unknown option Monitor:Colour; see `driftline check --list` for every option", run.Error.TrimEnd());
    }

    [Theory]
    [InlineData("""{"Model":{"HashBits":"abc"}}""", "Model:HashBits must be a whole number, not 'abc'")]
    [InlineData("""{"Model":{"HashBits":18.5}}""", "Model:HashBits must be a whole number, not '18.5'")]
    [InlineData("""{"Model":{"LearningRate":"fast"}}""", "Model:LearningRate must be a number, not 'fast'")]
    [InlineData("""{"Labels":{"MaxAge":"a week"}}""", "Labels:MaxAge must be a duration")]
    [InlineData("""{"Model":{"HashBits":null}}""", "Model:HashBits has no value; give a whole number or leave it out")]
    [InlineData("""{"Model":{"HashBits":{"x":1}}}""", "Model:HashBits is a single value, not a section")]
    [InlineData("""{"Model":7}""", "Model is a section, not the single value '7'")]
    [InlineData("""{"Alerts":{"x":{"Name":"a"}}}""", "Alerts:x is not a list position")]
    [InlineData("""{"Model":{"FixedScales":{"distance_km":"far"}}}""", "Model:FixedScales:distance_km must be a number, not 'far'")]
    public async Task Check_ValueOfTheWrongKind_SaysWhatKindInPlainWords(string json, string expected)
    {
        using var dir = new TempFolder();
        var (run, path) = await CheckAsync(dir, json);
        Assert.Equal(3, run.ExitCode);
        Assert.StartsWith($"driftline: config {path}: {expected}", run.Error, StringComparison.Ordinal);
        Assert.Single(run.Error.TrimEnd().Split('\n'));
        AssertUserTerms(run.Error);
    }

    [Fact]
    public async Task Check_TypoInEnvironmentVariable_NamesTheVariableNotTheFile()
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, "{}", new() { ["DRIFTLINE_Model__HashBitz"] = "20" });
        Assert.Equal(3, run.ExitCode);
        Assert.Equal("driftline: environment DRIFTLINE_Model__HashBitz: unknown option Model:HashBitz; did you mean Model:HashBits?", run.Error.TrimEnd());
    }

    [Fact]
    public async Task Check_OutOfRangeValueFromEnvironment_NamesTheVariable()
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, """{"Model":{"HashBits":18}}""", new() { ["DRIFTLINE_Model__HashBits"] = "40" });
        Assert.Equal(3, run.ExitCode);
        Assert.StartsWith("driftline: environment DRIFTLINE_Model__HashBits: Model:HashBits: 40 is outside 10–28.", run.Error, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("http://alerts.example.com/hook", true)]
    [InlineData("https://alerts.example.com/hook", false)]
    public async Task Check_PlainHttpWebhook_SaysItIsUnencrypted(string url, bool warned)
    {
        using var dir = new TempFolder();
        var (run, _) = await CheckAsync(dir, "{\"Webhook\":{\"Url\":\"" + url + "\"}}");
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Equal(warned ? 1 : 0, run.Out.Split('\n').Count(l => l.Contains("plain http://", StringComparison.Ordinal)));
    }

    [Fact]
    public async Task Check_List_PrintsEveryOptionWithDefaultAndMeaning()
    {
        var run = await CliRun.RunAsync("check", "--list");
        Assert.True(run.ExitCode == 0, run.Error);
        var lines = run.Out.Split('\n').Select(l => l.TrimEnd('\r')).ToList();
        foreach (var path in Leaves(OptionSchema.Root))
        {
            int at = lines.FindIndex(l => l.StartsWith(path + " = ", StringComparison.Ordinal));
            Assert.True(at >= 0, $"{path} is not listed");
            Assert.True(at + 1 < lines.Count && lines[at + 1].StartsWith("    ", StringComparison.Ordinal) && lines[at + 1].Trim().Length > 10, $"{path} has no meaning");
        }
        Assert.Contains("Model:HashBits = 18  (a whole number)", lines);
        Assert.Contains("Model:Learner = AdaGrad  (one of Ftrl, AdaGrad)", lines);
        Assert.Contains("Labels:MaxAge = \"7.00:00:00\"  (a duration written [days.]hours:minutes:seconds, e.g. \"00:00:10\")", lines);
        Assert.Contains("Kafka:Client:<name> = {}  (text per name)", lines);
        Assert.Contains("Worker:MetricsPort = 9464  (a whole number)", lines);
        AssertUserTerms(run.Out);
    }

    private static IEnumerable<string> Leaves(OptionNode node) => node.Shape switch
    {
        OptionShape.Section => node.Children.SelectMany(Leaves),
        OptionShape.List when node.Children[0].Shape == OptionShape.Section => Leaves(node.Children[0]).Prepend(node.Path),
        OptionShape.Map => [node.Children[0].Path],
        _ => [node.Path],
    };
}
