using Driftline.Core.Options;
using Driftline.Output;
using Driftline.Pipeline;
using Driftline.Report;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Report;

public sealed class ReportRecorderTests(DemoReplay replay) : IClassFixture<DemoReplay>
{
    [Fact]
    public async Task Finish_DemoReplaySampledEveryEvent_KeepsSeriesBoundedAndWindowsAroundAlerts()
    {
        var options = new DriftlineOptions();
        ReportRecorder? recorder = null;
        var lane = new ReplayLane(options, sink => recorder = new ReportRecorder(sink, new ReportData("default", options), sampleEvery: 1));
        recorder!.Attach(lane.Engine);
        var pipeline = new ReplayPipeline([lane]);
        using var dir = new TempFolder();
        using (var input = File.OpenRead(replay.Input))
        using (var outputs = new ReplayOutputs(dir.Path))
        {
            await pipeline.RunAsync(input, outputs, TestContext.Current.CancellationToken);
        }

        recorder.Finish();
        var data = recorder.Data;

        // 20,000 events sampled one by one must have been thinned at least once.
        Assert.InRange(data.Points.Count, ReportRecorder.MaxPoints / 2, ReportRecorder.MaxPoints);
        Assert.True(data.Points.Zip(data.Points.Skip(1)).All(p => p.First.Labels < p.Second.Labels), "points in label order");
        Assert.Equal(lane.Engine.Counters.Labels, data.Points[^1].Labels);

        int window = options.Monitor.Window;
        var raised = data.Alerts.Where(a => a.Alert.Raised).ToList();
        Assert.NotEmpty(raised);
        foreach (var a in raised)
        {
            Assert.Equal(a.Alert.Labels, a.At.Labels);
            Assert.Equal(window, a.At.Count);
            Assert.NotNull(a.Before);
            Assert.True(a.Before.Labels <= a.At.Labels - window, "the window before ends where the alerting one starts");
            Assert.NotNull(a.After);
            Assert.True(a.After.Labels >= a.At.Labels + window || a.After.Labels == data.Counters.Labels);
            Assert.Equal(a.At.Count, a.At.Bins.Sum(b => b.Count));
        }
        Assert.Equal(data.Counters.Labels, data.WholeRun.Sum(b => b.Count));
    }

    [Fact]
    public void Inline_TwoCharts_PrefixesIdsAndReferences()
    {
        const string svg = "<?xml version=\"1.0\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"400\" height=\"300\"><clipPath id=\"cl_4\"/><g clip-path=\"url(#cl_4)\"/></svg>";

        string a = SvgFragment.Inline(svg, "a-", "A");

        Assert.StartsWith("<svg", a, StringComparison.Ordinal);
        Assert.Contains("viewBox=\"0 0 400 300\"", a, StringComparison.Ordinal);
        Assert.Contains("id=\"a-cl_4\"", a, StringComparison.Ordinal);
        Assert.Contains("url(#a-cl_4)", a, StringComparison.Ordinal);
        Assert.Contains("aria-label=\"A\"", a, StringComparison.Ordinal);
    }
}
