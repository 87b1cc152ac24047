using Driftline.Cli;
using Xunit;

namespace Driftline.Tests.Cli;

public sealed class ReplayProgressTests
{
    private sealed class ManualClock : TimeProvider
    {
        public long Ticks { get; set; }

        public override long TimestampFrequency => TimeSpan.TicksPerSecond;

        public override long GetTimestamp() => Ticks;

        public void Advance(TimeSpan by) => Ticks += by.Ticks;
    }

    [Fact]
    public void Report_NotATerminal_WritesAPlainLineEveryInterval()
    {
        var clock = new ManualClock();
        var error = new StringWriter();
        var progress = new ReplayProgress(error, terminal: false, totalBytes: 1_000, clock);

        clock.Advance(TimeSpan.FromSeconds(1));
        progress.Report(100, 10, 5, 1, 0);
        Assert.Equal("", error.ToString());

        clock.Advance(TimeSpan.FromSeconds(5));
        progress.Report(500, 50_000, 40_000, 10_000, 2);
        progress.Done(1_000, 100_000, 90_000, 30_000, 3);

        var lines = error.ToString().Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(2, lines.Length);
        Assert.StartsWith("replay: 50%, 50,000 events", lines[0], StringComparison.Ordinal);
        Assert.Contains("2 alerts", lines[0], StringComparison.Ordinal);
        Assert.Contains("about 6 s left", lines[0], StringComparison.Ordinal);
        Assert.DoesNotContain('\r', error.ToString());
        Assert.Contains("done in 6 s", lines[1], StringComparison.Ordinal);
    }

    [Fact]
    public void Report_Terminal_RedrawsOneBarInPlace()
    {
        var clock = new ManualClock();
        var error = new StringWriter();
        var progress = new ReplayProgress(error, terminal: true, totalBytes: 1_000, clock);

        clock.Advance(TimeSpan.FromSeconds(1));
        progress.Report(250, 1_000, 800, 200, 0);
        clock.Advance(TimeSpan.FromSeconds(1));
        progress.Report(500, 2_000, 1_600, 400, 1);
        progress.Done(1_000, 4_000, 3_200, 800, 1);

        string text = error.ToString();
        Assert.StartsWith("\r[######------------------]  25%", text, StringComparison.Ordinal);
        Assert.Equal(3, text.Count(c => c == '\r'));
        Assert.EndsWith(Environment.NewLine, text, StringComparison.Ordinal);
        Assert.Single(text.Split(Environment.NewLine, StringSplitOptions.RemoveEmptyEntries));
    }

    [Fact]
    public void Done_ShortRun_WritesNothing()
    {
        var error = new StringWriter();
        var progress = new ReplayProgress(error, terminal: false, totalBytes: null, new ManualClock());

        progress.Report(10, 1, 1, 0, 0);
        progress.Done(10, 1, 1, 0, 0);

        Assert.Equal("", error.ToString());
    }
}
