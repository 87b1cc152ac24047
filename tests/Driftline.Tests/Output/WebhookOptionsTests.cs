using Driftline.Configuration;
using Microsoft.Extensions.Configuration;
using Xunit;

namespace Driftline.Tests.Output;

public sealed class WebhookOptionsTests
{
    private static Core.Options.DriftlineOptions? Bind(Dictionary<string, string?> settings, out IReadOnlyList<Core.Options.OptionError> errors) =>
        ConfigLoader.Bind(new ConfigurationBuilder().AddInMemoryCollection(settings).Build(), out errors);

    [Fact]
    public void Bind_NoWebhookSection_IsOffWithTheDocumentedDefaults()
    {
        var options = Bind([], out var errors);
        Assert.Empty(errors);
        var w = options!.Webhook;
        Assert.Null(w.Address());
        Assert.Equal((TimeSpan.FromSeconds(5), 5, TimeSpan.FromSeconds(1), TimeSpan.FromSeconds(60), 1_000, TimeSpan.FromSeconds(10)),
            (w.Timeout, w.MaxAttempts, w.FirstRetryDelay, w.MaxRetryDelay, w.QueueLimit, w.ShutdownGrace));
    }

    [Fact]
    public void Bind_FullSection_TakesEveryValue()
    {
        var options = Bind(new()
        {
            ["Webhook:Url"] = "https://alerts.example.com/driftline?token=abc",
            ["Webhook:Timeout"] = "00:00:02",
            ["Webhook:MaxAttempts"] = "3",
            ["Webhook:FirstRetryDelay"] = "00:00:00.5",
            ["Webhook:MaxRetryDelay"] = "00:00:30",
            ["Webhook:QueueLimit"] = "50",
            ["Webhook:ShutdownGrace"] = "00:00:03",
        }, out var errors);
        Assert.Empty(errors);
        var w = options!.Webhook;
        Assert.Equal(new Uri("https://alerts.example.com/driftline?token=abc"), w.Address());
        Assert.Equal((TimeSpan.FromSeconds(2), 3, TimeSpan.FromMilliseconds(500), TimeSpan.FromSeconds(30), 50, TimeSpan.FromSeconds(3)),
            (w.Timeout, w.MaxAttempts, w.FirstRetryDelay, w.MaxRetryDelay, w.QueueLimit, w.ShutdownGrace));
    }

    [Theory]
    [InlineData("Webhook:Url", "alerts.example.com/hook", "Webhook:Url: 'alerts.example.com/hook' is not an absolute address")]
    [InlineData("Webhook:Url", "ftp://alerts.example.com/hook", "Webhook:Url: 'ftp' is not http or https")]
    [InlineData("Webhook:Timeout", "00:00:00", "Webhook:Timeout")]
    [InlineData("Webhook:MaxAttempts", "0", "Webhook:MaxAttempts: 0 is outside 1–100")]
    [InlineData("Webhook:FirstRetryDelay", "-00:00:01", "Webhook:FirstRetryDelay")]
    [InlineData("Webhook:MaxRetryDelay", "00:00:00.1", "Webhook:MaxRetryDelay")]
    [InlineData("Webhook:QueueLimit", "0", "Webhook:QueueLimit: 0 is outside 1–1,000,000")]
    [InlineData("Webhook:ShutdownGrace", "-00:00:01", "Webhook:ShutdownGrace")]
    [InlineData("Webhook:Retries", "3", "unknown option Webhook:Retries")]
    public void Bind_BadValue_NamesTheOption(string key, string value, string expected)
    {
        var options = Bind(new() { ["Webhook:Url"] = "http://127.0.0.1:9/alerts", [key] = value }, out var errors);
        Assert.Null(options);
        Assert.Contains(errors, e => e.ToString().Contains(expected, StringComparison.Ordinal));
    }

    [Fact]
    public void Bind_BlankUrl_MeansOff()
    {
        // An environment override such as DRIFTLINE_Webhook__Url= switches the webhook off.
        var options = Bind(new() { ["Webhook:Url"] = " " }, out var errors);
        Assert.Empty(errors);
        Assert.Null(options!.Webhook.Address());
    }

    [Fact]
    public async Task Check_WebhookConfigured_ShowsTheHostButNotThePath()
    {
        using var dir = new Support.TempFolder();
        File.WriteAllText(dir.File("hook.json"), """{"Webhook":{"Url":"https://alerts.example.com:8443/hooks/T0KEN?sig=abc","MaxAttempts":3}}""");
        var run = await Cli.CliRun.RunAsync("check", dir.File("hook.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("Webhook: each alert POSTed to https://alerts.example.com:8443/…, up to 3 attempts of at most 5 s each", run.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("T0KEN", run.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("sig=abc", run.Out, StringComparison.Ordinal);
    }
}
