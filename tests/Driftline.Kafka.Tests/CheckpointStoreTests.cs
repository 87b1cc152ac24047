using System.Text.Json.Nodes;
using Driftline.Core.Options;
using Driftline.Core.Scoring;
using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Tests.Support;
using Xunit;

namespace Driftline.Kafka.Tests;

public sealed class CheckpointStoreTests
{
    private static PartitionCheckpoint Checkpoint(int partition, long events = 10, long labels = 4) => new()
    {
        EventsTopic = "cs-events",
        Partition = partition,
        EventsOffset = events,
        LabelsOffset = labels,
        WrittenAt = DateTime.UtcNow,
        Snapshot = new ScoringEngine(new DriftlineOptions(), new NullSink()).Snapshot(),
    };

    [Fact]
    public void Serialize_SnapshotOfCopiedStores_SameBytesAsItsListsAndReadsBack()
    {
        // A fed engine holds waiting and graded predictions and inline-labelled ids; its snapshot
        // holds them as copies of the stores' records. The reference is the same checkpoint with
        // those made lists, which the checkpoint context's own metadata writes (as every build
        // before the copies did).
        var engine = new ScoringEngine(new DriftlineOptions(), new NullSink());
        var parser = new Driftline.Core.Events.EventParser();
        var record = new Driftline.Core.Events.ParsedRecord();
        for (int i = 0; i < 500; i++)
        {
            string label = i % 2 == 0 ? $",\"label\":{i % 3 % 2}" : "";
            Assert.True(parser.TryParse(System.Text.Encoding.UTF8.GetBytes($"{{\"id\":\"é{i}\",\"features\":{{\"x\":{i % 9},\"zone\":\"z{i % 4}\"}}{label}}}"), record, out _));
            engine.Process(record);
            if (i >= 20 && i % 4 == 1)
            {
                Assert.True(parser.TryParse(System.Text.Encoding.UTF8.GetBytes($"{{\"id\":\"é{i - 20}\",\"label\":1}}"), record, out _));
                engine.Process(record);
            }
        }
        var copied = Checkpoint(3);
        copied.Snapshot = engine.Snapshot();
        var listed = Checkpoint(3);
        listed.WrittenAt = copied.WrittenAt;
        listed.Snapshot = engine.Snapshot();
        Assert.Equal(engine.Pending.Count, listed.Snapshot.Pending.Count);
        Assert.Equal(engine.InlineLabelled.Count, listed.Snapshot.InlineLabelled!.Count);

        byte[] json = CheckpointStore.Serialize(copied);

        Assert.Equal(CheckpointStore.Serialize(listed), json);
        var read = CheckpointStore.Parse(new MemoryStream(json), "test");
        Assert.Equal(listed.Snapshot.Pending.Select(p => p.Id), read.Snapshot.Pending.Select(p => p.Id));
        Assert.Equal(listed.Snapshot.InlineLabelled, read.Snapshot.InlineLabelled);
        Assert.Contains(read.Snapshot.Pending, p => !p.Labelled && p.Slots is { Length: > 0 });
    }

    [Fact]
    public void Serialize_SourceGeneratedContext_WritesTheReflectionSerializersBytes()
    {
        // Reference: System.Text.Json's reflection serializer with the options the store used
        // before its source-generated context (native AOT builds cannot reflect), so checkpoints
        // written by either build read back in the other.
        var reflection = new System.Text.Json.JsonSerializerOptions
        {
            PropertyNamingPolicy = System.Text.Json.JsonNamingPolicy.SnakeCaseLower,
            Converters = { new Driftline.Core.Snapshots.EnumNamesOnly() },
            NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals,
            TypeInfoResolver = new System.Text.Json.Serialization.Metadata.DefaultJsonTypeInfoResolver(),
        };
        var checkpoint = Checkpoint(2);
        byte[] generated = CheckpointStore.Serialize(checkpoint);

        Assert.Equal(System.Text.Encoding.UTF8.GetString(System.Text.Json.JsonSerializer.SerializeToUtf8Bytes(checkpoint, reflection)), System.Text.Encoding.UTF8.GetString(generated));
        Assert.Contains("\"learner\":\"AdaGrad\"", System.Text.Encoding.UTF8.GetString(generated), StringComparison.Ordinal);
    }

    [Fact]
    public void Write_AnotherWritersTemporaryFileBeside_IsLeftAloneAndTheCheckpointLandsWhole()
    {
        // Two workers sharing a folder (a takeover on a shared volume) may write the same
        // partition at once; one fixed temporary name lets one truncate or rename the other's
        // half-written file. Each process writes through NAME.PID.tmp, as the replay outputs do.
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var checkpoint = Checkpoint(3);
        string path = store.PathOf(checkpoint.EventsTopic, checkpoint.Partition);
        string other = path + ".tmp";
        File.WriteAllText(other, "another writer's checkpoint, half written");

        store.Write(checkpoint, CheckpointStore.Serialize(checkpoint));

        Assert.Equal("another writer's checkpoint, half written", File.ReadAllText(other));
        Assert.Equal(10, store.Read(checkpoint.EventsTopic, checkpoint.Partition)!.EventsOffset);
        Assert.DoesNotContain(Directory.GetFiles(dir.Path), f => f.EndsWith($".{Environment.ProcessId}.tmp", StringComparison.Ordinal));
    }

    [Fact]
    public void Write_OlderCheckpointAfterANewerOneOfAnotherOwner_KeepsTheNewerOne()
    {
        // Two owners of one partition (the mock cluster assigns a partition to a member while
        // its old owner still holds it) write the same shared file; the one that lags must not
        // put the partition back in time. Common practice: a checkpoint only moves forward.
        using var dir = new TempDir();
        var ahead = new CheckpointStore(dir.Path);
        var behind = new CheckpointStore(dir.Path);
        var newer = Checkpoint(5, events: 20, labels: 8);
        var older = Checkpoint(5, events: 10, labels: 4);

        ahead.Write(newer, CheckpointStore.Serialize(newer));
        behind.Write(older, CheckpointStore.Serialize(older));

        var kept = ahead.Read("cs-events", 5)!;
        Assert.Equal((20L, 8L), (kept.EventsOffset, kept.LabelsOffset));
        Assert.DoesNotContain(Directory.GetFiles(dir.Path), f => f.EndsWith(".tmp", StringComparison.Ordinal));
    }

    [Fact]
    public void Write_Refused_ReturnsTheKeptPositionsAndSkipsTheTopicCopy()
    {
        // The checkpoint topic's copy runs under the same lock and only after the file was
        // written, so a lagging owner cannot put the topic back either (with a shared folder).
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var newer = Checkpoint(8, events: 30, labels: 12);
        var older = Checkpoint(8, events: 29, labels: 40);
        int copies = 0;

        var first = store.Write(newer, CheckpointStore.Serialize(newer), () => copies++);
        var second = store.Write(older, CheckpointStore.Serialize(older), () => copies++);

        Assert.Null(first);
        Assert.Equal((30L, 12L), second);
        Assert.Equal(1, copies);
    }

    [Fact]
    public void Write_SameEventsOffsetButFewerLabels_KeepsTheOneWithMoreLabels()
    {
        // Positions compare by events offset, then labels offset, as CheckpointLoader orders them.
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var newer = Checkpoint(6, events: 20, labels: 9);
        var older = Checkpoint(6, events: 20, labels: 8);

        store.Write(newer, CheckpointStore.Serialize(newer));
        store.Write(older, CheckpointStore.Serialize(older));

        Assert.Equal(9, store.Read("cs-events", 6)!.LabelsOffset);
    }

    [Fact]
    public async Task Write_AnotherProcessHoldsThePartitionsLock_WaitsForItThenWrites()
    {
        // Read, compare and rename must be one step across processes, or a lagging owner can
        // read an old file, lose the race and rename its older checkpoint over a newer one.
        // The lock is NAME.lock opened exclusively (an flock on Linux); here the test holds it,
        // as another worker in the middle of its write would.
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var checkpoint = Checkpoint(7);
        string path = store.PathOf(checkpoint.EventsTopic, checkpoint.Partition);
        using var held = new FileStream(path + ".lock", FileMode.OpenOrCreate, FileAccess.ReadWrite, FileShare.None);

        var writing = Task.Run(() => store.Write(checkpoint, CheckpointStore.Serialize(checkpoint)), TestContext.Current.CancellationToken);
        await Task.Delay(500, TestContext.Current.CancellationToken);
        Assert.False(writing.IsCompleted);
        Assert.False(File.Exists(path));

        held.Dispose();
        await writing.WaitAsync(TimeSpan.FromSeconds(30), TestContext.Current.CancellationToken);
        Assert.Equal(10, store.Read(checkpoint.EventsTopic, checkpoint.Partition)!.EventsOffset);
    }

    [Fact]
    public void RemoveLeftovers_TemporaryFilesOfEndedAndLiveProcesses_RemovesOnlyTheEndedOnes()
    {
        // A killed worker leaves NAME.PID.tmp behind; two workers share the folder, so a live
        // process's file is never touched, nor one whose partition is locked (a writer in
        // another PID namespace, a container on the same volume, is inside its write).
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        int ended = EndedProcessId();
        using var live = System.Diagnostics.Process.Start(new System.Diagnostics.ProcessStartInfo("sleep", "60") { UseShellExecute = false })!;
        try
        {
            string deadLeftover = store.PathOf("cs-events", 1) + $".{ended}.tmp";
            string liveFile = store.PathOf("cs-events", 2) + $".{live.Id}.tmp";
            string ownFile = store.PathOf("cs-events", 3) + $".{Environment.ProcessId}.tmp";
            string lockedLeftover = store.PathOf("cs-events", 4) + $".{ended}.tmp";
            foreach (var file in new[] { deadLeftover, liveFile, ownFile, lockedLeftover })
            {
                File.WriteAllText(file, "half a checkpoint");
            }
            using var held = new FileStream(store.PathOf("cs-events", 4) + ".lock", FileMode.OpenOrCreate, FileAccess.ReadWrite, FileShare.None);

            int removed = store.RemoveLeftovers();

            Assert.Equal(1, removed);
            Assert.False(File.Exists(deadLeftover));
            Assert.True(File.Exists(liveFile));
            Assert.True(File.Exists(ownFile));
            Assert.True(File.Exists(lockedLeftover));
        }
        finally
        {
            live.Kill();
        }
    }

    private static int EndedProcessId()
    {
        using var process = System.Diagnostics.Process.Start(new System.Diagnostics.ProcessStartInfo("true") { UseShellExecute = false })!;
        process.WaitForExit();
        return process.Id;
    }

    [Fact]
    public void Read_SnapshotWithInvalidSettings_IsRefusedAtLoadNamingTheFile()
    {
        // A model file is checked by SnapshotValidator before use; a checkpoint carries the same
        // snapshot and must be checked the same way, not restored and failing on the first event.
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var checkpoint = Checkpoint(1);
        var json = JsonNode.Parse(CheckpointStore.Serialize(checkpoint))!;
        json["snapshot"]!["options"]!["model"] = null;
        File.WriteAllText(store.PathOf(checkpoint.EventsTopic, 1), json.ToJsonString());

        var ex = Assert.Throws<InvalidDataException>(() => store.Read(checkpoint.EventsTopic, 1));
        Assert.Contains(store.PathOf(checkpoint.EventsTopic, 1), ex.Message, StringComparison.Ordinal);
        Assert.Contains("model", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Read_SnapshotWithoutItsCounters_IsRefused()
    {
        using var dir = new TempDir();
        var store = new CheckpointStore(dir.Path);
        var checkpoint = Checkpoint(2);
        var json = JsonNode.Parse(CheckpointStore.Serialize(checkpoint))!;
        json["snapshot"]!["counters"] = null;
        File.WriteAllText(store.PathOf(checkpoint.EventsTopic, 2), json.ToJsonString());

        var ex = Assert.Throws<InvalidDataException>(() => store.Read(checkpoint.EventsTopic, 2));
        Assert.Contains("counters", ex.Message, StringComparison.Ordinal);
    }
}
