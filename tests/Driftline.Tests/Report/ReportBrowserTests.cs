using System.Diagnostics;
using Driftline.Report;
using Driftline.Tests.Support;
using SkiaSharp;
using Xunit;

namespace Driftline.Tests.Report;

/// <summary>
/// The report as a real browser draws it: headless Chromium takes a screenshot of the demo
/// replay's report.html, which must show text and charts, not an empty page. Skipped where
/// Chromium is not installed (Debian: <c>apt-get install -y chromium</c>).
/// </summary>
public sealed class ReportBrowserTests(DemoReplay replay) : IClassFixture<DemoReplay>
{
    private const string Chromium = "/usr/bin/chromium";

    [Fact]
    public async Task Report_InHeadlessChromium_RendersChartsNotABlankPage()
    {
        if (!File.Exists(Chromium))
        {
            Assert.Skip($"{Chromium} is not installed (apt-get install -y chromium); the browser check needs it.");
        }
        using var scratch = new TempFolder();
        string png = scratch.File("report.png");
        string report = Path.Combine(replay.Output, ReportWriter.FileName);

        await Screenshot(report, png, scratch.File("profile"));

        using var bitmap = SKBitmap.Decode(png);
        Assert.NotNull(bitmap);
        Assert.Equal(1280, bitmap.Width);
        var (colours, inked) = Measure(bitmap);
        // A blank or unstyled page has a handful of colours; text and anti-aliased chart lines give hundreds.
        Assert.True(colours > 200, $"only {colours} distinct colours in the screenshot");
        Assert.True(inked > 0.02, $"only {inked:P1} of the screenshot differs from the background");
    }

    private static async Task Screenshot(string html, string png, string profile)
    {
        var start = new ProcessStartInfo(Chromium)
        {
            RedirectStandardError = true,
            RedirectStandardOutput = true,
            UseShellExecute = false,
        };
        foreach (var arg in new[]
        {
            "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync",
            $"--user-data-dir={profile}", $"--screenshot={png}", "--window-size=1280,2400",
            new Uri(Path.GetFullPath(html)).AbsoluteUri,
        })
        {
            start.ArgumentList.Add(arg);
        }
        using var browser = Process.Start(start)!;
        var stderr = browser.StandardError.ReadToEndAsync(TestContext.Current.CancellationToken);
        _ = browser.StandardOutput.ReadToEndAsync(TestContext.Current.CancellationToken);
        using var timeout = CancellationTokenSource.CreateLinkedTokenSource(TestContext.Current.CancellationToken);
        timeout.CancelAfter(TimeSpan.FromSeconds(90));
        try
        {
            await browser.WaitForExitAsync(timeout.Token);
        }
        catch (OperationCanceledException)
        {
            browser.Kill(entireProcessTree: true);
            throw;
        }
        Assert.True(File.Exists(png), $"Chromium exited {browser.ExitCode} without a screenshot: {await stderr}");
    }

    private static (int Colours, double Inked) Measure(SKBitmap bitmap)
    {
        var colours = new HashSet<uint>();
        var background = bitmap.GetPixel(2, 2);
        long inked = 0, seen = 0;
        for (int y = 0; y < bitmap.Height; y += 2)
        {
            for (int x = 0; x < bitmap.Width; x += 2)
            {
                var c = bitmap.GetPixel(x, y);
                colours.Add((uint)c);
                seen++;
                if (c != background && c != SKColors.White)
                {
                    inked++;
                }
            }
        }
        return (colours.Count, (double)inked / seen);
    }
}
