using Xunit;

namespace Driftline.Tests.Support;

/// <summary>
/// One small demo replay shared by a test class: 20,000 orders, enough for the storm to raise
/// and clear an alert with the default rules, small enough to run in a couple of seconds.
/// </summary>
public sealed class DemoReplay : IAsyncLifetime
{
    private readonly TempFolder _folder = new();

    internal string Input => _folder.File("demo.jsonl");

    internal string Output => _folder.File("out");

    internal string Stdout { get; private set; } = "";

    public async ValueTask InitializeAsync()
    {
        var demo = await TestCli.RunAsync("demo", "--out", Input, "--orders", "20000");
        Assert.Equal(0, demo.Code);
        var replay = await TestCli.RunAsync("replay", Input, "--out", Output);
        Assert.True(replay.Code == 0, replay.Error);
        Stdout = replay.Out;
    }

    public ValueTask DisposeAsync()
    {
        _folder.Dispose();
        return ValueTask.CompletedTask;
    }
}
