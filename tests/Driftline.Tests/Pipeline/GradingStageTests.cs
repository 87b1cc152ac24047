using System.Text.Json;
using System.Text.Json.Serialization;
using Driftline.Core.Options;
using Driftline.Core.Recalibration;
using Driftline.Output;
using Driftline.Pipeline;
using Driftline.Report;
using Driftline.Tests.Support;
using Xunit;

namespace Driftline.Tests.Pipeline;

/// <summary>
/// Grading on its own stage must change nothing a replay writes: every output file and the
/// report's samples are the bytes inline grading gives, run after run, and with
/// <c>Recalibration:Mode=OnAlert</c> (whose served probabilities depend on the rules' state
/// after each label) grading stays on the scoring thread.
/// </summary>
public sealed class GradingStageTests(DemoReplay demo) : IClassFixture<DemoReplay>
{
    private static readonly string[] Files = ["predictions.jsonl", "alerts.jsonl", "metrics.csv", "dead-letters.jsonl"];

    private static readonly JsonSerializerOptions Json = new() { NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals, IncludeFields = true };

    [Fact]
    public async Task Replay_GradingStage_SameBytesAsInlineAndAcrossRuns()
    {
        var options = new DriftlineOptions();
        options.Monitor.MetricsEvery = 500;
        var inline = await RunAsync(options, gradingStage: false);
        var staged = await RunAsync(options, gradingStage: true);
        var again = await RunAsync(options, gradingStage: true);

        Assert.False(inline.Deferred);
        Assert.True(staged.Deferred);
        // The demo's storm raises and clears alerts and the run writes metric rows, so the
        // comparison covers what the grading stage produces, not only empty files.
        Assert.Contains("\"state\":\"raised\"", File.ReadAllText(Path.Combine(inline.Folder.Path, "alerts.jsonl")), StringComparison.Ordinal);
        Assert.True(File.ReadAllLines(Path.Combine(inline.Folder.Path, "metrics.csv")).Length > 10);
        foreach (var file in Files)
        {
            byte[] expected = File.ReadAllBytes(Path.Combine(inline.Folder.Path, file));
            Assert.Equal(expected, File.ReadAllBytes(Path.Combine(staged.Folder.Path, file)));
            Assert.Equal(expected, File.ReadAllBytes(Path.Combine(again.Folder.Path, file)));
        }
        Assert.NotEmpty(inline.Report.Alerts);
        Assert.Equal(inline.ReportJson, staged.ReportJson);
        Assert.Equal(inline.ReportJson, again.ReportJson);
        inline.Folder.Dispose();
        staged.Folder.Dispose();
        again.Folder.Dispose();
    }

    [Fact]
    public async Task Replay_RecalibrationOnAlert_GradesInlineWithTheSameBytes()
    {
        var options = new DriftlineOptions();
        options.Recalibration.Mode = RecalibrationMode.OnAlert;
        var inline = await RunAsync(options, gradingStage: false);
        var staged = await RunAsync(options, gradingStage: true);

        Assert.False(staged.Deferred);
        // The storm's calibration alert switches the correction on: some served p differs from its raw p.
        Assert.Contains(File.ReadLines(Path.Combine(inline.Folder.Path, "predictions.jsonl")), line =>
        {
            using var doc = JsonDocument.Parse(line);
            return doc.RootElement.TryGetProperty("p_raw", out var raw) && raw.GetDouble() != doc.RootElement.GetProperty("p").GetDouble();
        });
        foreach (var file in Files)
        {
            Assert.Equal(File.ReadAllBytes(Path.Combine(inline.Folder.Path, file)), File.ReadAllBytes(Path.Combine(staged.Folder.Path, file)));
        }
        Assert.Equal(inline.ReportJson, staged.ReportJson);
        Assert.Throws<InvalidOperationException>(() => new ReplayLane(options).Engine.DeferGradingTo(new Driftline.Core.Scoring.GradingLog()));
        inline.Folder.Dispose();
        staged.Folder.Dispose();
    }

    private async Task<(TempFolder Folder, ReportData Report, string ReportJson, bool Deferred)> RunAsync(DriftlineOptions options, bool gradingStage)
    {
        ReportRecorder? recorder = null;
        var lane = new ReplayLane(options, sink => recorder = new ReportRecorder(sink, new ReportData("default", options)));
        recorder!.Attach(lane.Engine);
        var pipeline = new ReplayPipeline([lane]) { GradingStage = gradingStage };
        var folder = new TempFolder();
        using (var input = File.OpenRead(demo.Input))
        using (var outputs = new ReplayOutputs(folder.Path, served: options.Recalibration.Enabled))
        {
            await pipeline.RunAsync(input, outputs, TestContext.Current.CancellationToken);
        }
        recorder.Finish();
        var data = recorder.Data;
        string json = JsonSerializer.Serialize(new { data.Points, data.Alerts, data.Total, data.WholeRun, data.Counters }, Json);
        return (folder, data, json, gradingStage && lane.Engine.CanDeferGrading);
    }
}
