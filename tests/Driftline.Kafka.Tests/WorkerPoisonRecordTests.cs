using System.Text.Json;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerPoisonRecordTests
{
    // An unpaired UTF-16 surrogate escape (RFC 8259 section 8.2) in each place the parser
    // unescapes a string, and one message over the size limit. Before the fix each one crashed the worker before its offset was
    // committed, so every restart read it again.
    private static readonly string[] Poison =
    [
        """{"id":"a\ud800","features":{"x":1}}""",
        """{"id":"p2","key":"k\udc00","features":{"x":1}}""",
        """{"id":"p3","time":"2026-01-01T00:00:05Z\ud800","features":{"x":1}}""",
        """{"id":"p4","features":{"zo\ud800ne":"north"}}""",
        """{"id":"p5","features":{"zone":"no\udfffrth"}}""",
        """{"id":"p6","features":{"tags":["ok","b\ud800"]}}""",
        """{"i\ud800d":"p7","features":{"x":1}}""",
        // Over Input:MaxLineBytes (4,096 here): refused before it is parsed.
        "{\"id\":\"big\",\"features\":{\"note\":\"" + new string('n', 10_000) + "\"}}",
    ];

    [Fact]
    public void Run_PoisonRecordsAmongGoodOnes_DeadLettersThemKeepsScoringAndExitsZeroOnSigterm()
    {
        using var cluster = new MockCluster();
        var good = TestStream.Generate(400, keys: 2, seed: 5, lateShare: 0.3);
        var events = new List<(string?, string, long)>();
        int next = 0;
        foreach (var r in good.Where(r => !r.IsLabel))
        {
            events.Add((r.Key, r.Value, r.TimestampMs));
            if (events.Count % 40 == 0 && next < Poison.Length)
            {
                events.Add((r.Key, Poison[next++], r.TimestampMs));
            }
        }
        Assert.Equal(Poison.Length, next);
        var labels = good.Where(r => r.IsLabel).Select(r => ((string?)r.Key, r.Value, r.TimestampMs)).ToList();
        labels.Insert(labels.Count / 2, ("k0", """{"id":"e-000001\udbff","label":1}""", labels[labels.Count / 2].TimestampMs));
        Topics.Produce(cluster.Bootstrap, "poison-events", events);
        Topics.Produce(cluster.Bootstrap, "poison-labels", labels);

        using var dir = new TempDir();
        string config = Path.Combine(dir.Path, "driftline.json");
        File.WriteAllText(config, JsonSerializer.Serialize(new
        {
            Kafka = new
            {
                Group = "poison-g",
                EventsTopic = "poison-events",
                LabelsTopic = "poison-labels",
                PredictionsTopic = "poison-predictions",
                AlertsTopic = "poison-alerts",
                DeadLetterTopic = "poison-dead",
                CheckpointDir = Path.Combine(dir.Path, "checkpoints"),
            },
            Worker = new { MetricsPort = 0 },
            Input = new { MaxLineBytes = 4096 },
        }));

        int scored = good.Count(r => !r.IsLabel);
        using var worker = new WorkerProcess(config, cluster.Bootstrap);
        // A reader made before the worker first writes a topic would not see the topic appear,
        // so each look is a fresh reader.
        var predictions = Eventually(cluster.Bootstrap, "poison-predictions", scored, worker);
        var dead = Eventually(cluster.Bootstrap, "poison-dead", Poison.Length + 1, worker).Select(v => JsonDocument.Parse(v).RootElement).ToList();
        Assert.False(worker.HasExited, "the worker stopped on a poison record:\n" + worker.Errors);
        int exit = worker.Terminate(TimeSpan.FromSeconds(30));

        Assert.True(exit == 0, $"exit code {exit} after SIGTERM:\n{worker.Errors}");
        Assert.Equal(Poison.Length + 1, dead.Count);
        var reasons = dead.Select(d => d.GetProperty("reason").GetString()!).ToList();
        // Seven on the events topic and one on the labels topic.
        Assert.Equal(Poison.Length, reasons.Count(r => r.Contains("surrogate", StringComparison.Ordinal)));
        Assert.Contains(string.Create(System.Globalization.CultureInfo.InvariantCulture, $"message of {Poison[^1].Length:N0} bytes exceeds Input:MaxLineBytes (4,096)"), reasons);
        Assert.Equal(Poison.Length, dead.Count(d => d.GetProperty("source_topic").GetString() == "poison-events"));
        Assert.Equal(scored, predictions.Select(p => JsonDocument.Parse(p).RootElement.GetProperty("id").GetString()).Distinct().Count());
        Assert.DoesNotContain("Unhandled", worker.Errors, StringComparison.Ordinal);
    }

    private static List<string> Eventually(string bootstrap, string topic, int count, WorkerProcess worker)
    {
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(60);
        var values = new List<string>();
        while (values.Count < count && !worker.HasExited && DateTime.UtcNow < deadline)
        {
            values = Topics.ReadAll(bootstrap, topic, _ => true, TimeSpan.FromSeconds(5));
        }
        return values;
    }
}
