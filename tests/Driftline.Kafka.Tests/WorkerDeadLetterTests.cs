using System.Text.Json;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class WorkerDeadLetterTests
{
    [Fact]
    public void Run_PoisonRecords_GoToTheDeadLetterTopicWithReasonAndPositionAndTheRestIsScored()
    {
        using var cluster = new MockCluster();
        long t = TestStream.StartMs;
        var good = TestStream.Generate(200, keys: 1, seed: 9, lateShare: 0);
        (string?, string, long)[] poison =
        [
            ("k0", "{\"id\":\"broken\",\"features\":{\"zone\":", t + 1),
            ("k0", "{\"features\":{\"zone\":\"north\"}}", t + 2),
            ("k0", "   ", t + 3),
            ("k0", "[1,2,3]", t + 4),
        ];
        Topics.Produce(cluster.Bootstrap, "dl-events", good.Select(r => ((string?)r.Key, r.Value, r.TimestampMs)).Concat(poison));
        Topics.Produce(cluster.Bootstrap, "dl-labels", [("k0", "{\"id\":\"never-scored\",\"label\":1}", t + 5_000)]);
        using var dir = new TempDir();
        var options = WorkerHost.OptionsFor(cluster.Bootstrap, "dl", dir.Path);
        using (var host = new WorkerHost(options))
        {
            host.WaitFor(s => s.Predictions >= good.Count && s.DeadLetters >= poison.Length + 1, TimeSpan.FromSeconds(60));
            host.Stop();
        }

        var letters = Topics.ReadAll(cluster.Bootstrap, options.DeadLetterTopic, v => v.Count >= poison.Length + 1, TimeSpan.FromSeconds(30))
            .Select(v => JsonDocument.Parse(v).RootElement).ToList();
        Assert.Equal(poison.Length + 1, letters.Count);
        foreach (var letter in letters)
        {
            Assert.False(string.IsNullOrWhiteSpace(letter.GetProperty("reason").GetString()));
            Assert.True(letter.GetProperty("partition").GetInt32() >= 0);
            Assert.True(letter.GetProperty("offset").GetInt64() >= 0);
        }
        Assert.Equal(poison.Length, letters.Count(l => l.GetProperty("source_topic").GetString() == options.EventsTopic));
        var label = Assert.Single(letters, l => l.GetProperty("source_topic").GetString() == options.LabelsTopic);
        Assert.Contains("no pending prediction", label.GetProperty("reason").GetString(), StringComparison.Ordinal);
        Assert.Contains(letters, l => l.GetProperty("raw").GetString()!.Contains("\"broken\"", StringComparison.Ordinal));
    }
}
