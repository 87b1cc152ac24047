using Driftline.Configuration;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class RunSettingsTests
{
    private static readonly string Example = Path.Combine(RepositoryRoot(), "config", "kafka-worker.json");

    [Fact]
    public void Load_ExampleConfiguration_IsValidAndBindsEverySection()
    {
        var settings = RunSettings.Load(Example, null, new Dictionary<string, string?>(), out var errors);
        Assert.Empty(errors);
        Assert.NotNull(settings);
        Assert.Equal("labels", settings.Kafka.LabelsTopic);
        Assert.Equal(TimeSpan.FromSeconds(10), settings.Kafka.CheckpointEvery);
        Assert.Equal("driftline-checkpoints", settings.Kafka.CheckpointTopic);
        Assert.Equal("30000", settings.Kafka.Client["session.timeout.ms"]);
        Assert.Equal("json", settings.Worker.LogFormat);
        Assert.Equal(50_000, settings.Core.Model.HalfLifeLabels);
    }

    [Fact]
    public void Load_EnvironmentThenCommandLine_LastOneWins()
    {
        var env = new Dictionary<string, string?> { ["DRIFTLINE_Kafka__Group"] = "from-env", ["DRIFTLINE_Kafka__EventsTopic"] = "env-events" };
        var overrides = new Dictionary<string, string?> { ["Group"] = "from-command-line", ["EventsTopic"] = null };
        var settings = RunSettings.Load(Example, env, overrides, out _);
        Assert.NotNull(settings);
        Assert.Equal("from-command-line", settings.Kafka.Group);
        Assert.Equal("env-events", settings.Kafka.EventsTopic);
    }

    [Fact]
    public void Load_CheckpointTopicFromEnvironment_IsBound()
    {
        var env = new Dictionary<string, string?> { ["DRIFTLINE_Kafka__CheckpointTopic"] = "team-checkpoints" };
        var settings = RunSettings.Load(Example, env, new Dictionary<string, string?>(), out var errors);
        Assert.Empty(errors);
        Assert.Equal("team-checkpoints", settings!.Kafka.CheckpointTopic);
    }

    [Theory]
    [InlineData("events", "also used")]
    [InlineData("predictions", "also used")]
    [InlineData("check points", "not a valid topic name")]
    public void Load_CheckpointTopicUnusable_NamesTheOptionAndTheFix(string topic, string reason)
    {
        var env = new Dictionary<string, string?> { ["DRIFTLINE_Kafka__CheckpointTopic"] = topic };
        Assert.Null(RunSettings.Load(Example, env, new Dictionary<string, string?>(), out var errors));
        var error = Assert.Single(errors);
        Assert.Equal("Kafka:CheckpointTopic", error.Option);
        Assert.Contains(reason, error.Problem, StringComparison.Ordinal);
        Assert.Contains("driftline-checkpoints", error.Fix, StringComparison.Ordinal);
    }

    [Fact]
    public void Check_ExampleConfiguration_AcceptsTheWorkerSections()
    {
        var output = new StringWriter();
        var context = new Driftline.Cli.CommandContext(output, new StringWriter(), new Dictionary<string, string?>(), () => Stream.Null);
        Assert.Equal(Driftline.Cli.ExitCode.Ok, new Driftline.Cli.CheckCommand(context).Run(Example));
    }

    private static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Driftline.sln")))
        {
            dir = dir.Parent;
        }
        return dir?.FullName ?? throw new DirectoryNotFoundException("repository root not found above " + AppContext.BaseDirectory);
    }
}
