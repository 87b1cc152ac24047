using System.Buffers;
using System.Text.Json;
using Driftline.Core.Snapshots;

namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// Per-partition checkpoints as JSON files in one folder, named after the events topic and
/// partition. A write goes to a temporary file that is flushed to disk and then renamed over
/// the old one, so a crash leaves either the old checkpoint or the new one, never half of one.
/// </summary>
internal sealed partial class CheckpointStore
{
    private readonly string _directory;

    /// <summary>Uses (and creates) <paramref name="directory"/>.</summary>
    public CheckpointStore(string directory)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(directory);
        _directory = Path.GetFullPath(directory);
        System.IO.Directory.CreateDirectory(_directory);
    }

    /// <summary>The folder.</summary>
    public string Directory => _directory;

    /// <summary>The file of one partition.</summary>
    public string PathOf(string eventsTopic, int partition) =>
        Path.Combine(_directory, $"{Sanitise(eventsTopic)}-{partition}.checkpoint.json");

    /// <summary>
    /// Reads a partition's checkpoint, or null when there is none. Throws
    /// <see cref="InvalidDataException"/> when the file is not a readable checkpoint: resuming
    /// from nothing would double-apply labels, so that is an operator's call.
    /// </summary>
    public PartitionCheckpoint? Read(string eventsTopic, int partition)
    {
        string path = PathOf(eventsTopic, partition);
        if (!File.Exists(path))
        {
            return null;
        }
        using var file = File.OpenRead(path);
        return Parse(file, $"checkpoint '{path}'");
    }

    /// <summary>
    /// Reads a checkpoint from its JSON (a file's or one assembled from the checkpoint topic).
    /// Throws <see cref="InvalidDataException"/>, naming <paramref name="source"/>, when it is
    /// not a checkpoint of a layout this build knows.
    /// </summary>
    public static PartitionCheckpoint Parse(Stream json, string source)
    {
        PartitionCheckpoint? checkpoint;
        try
        {
            checkpoint = JsonSerializer.Deserialize(json, CheckpointJsonContext.Default.PartitionCheckpoint);
        }
        catch (JsonException ex)
        {
            throw new InvalidDataException($"{source} is not readable: {EnumNamesOnly.Describe(ex)}", ex);
        }
        if (checkpoint is null || checkpoint.Format != PartitionCheckpoint.FormatName || checkpoint.FormatVersion != PartitionCheckpoint.CurrentVersion)
        {
            throw new InvalidDataException($"{source} is not a version {PartitionCheckpoint.CurrentVersion} Driftline partition checkpoint");
        }
        if (checkpoint.Snapshot is null || checkpoint.Snapshot.Format != EngineSnapshot.FormatName || checkpoint.Snapshot.FormatVersion != EngineSnapshot.CurrentVersion)
        {
            throw new InvalidDataException($"{source} holds a model snapshot of another format version");
        }
        try
        {
            // The same checks as a model file's: damage is refused here, not met on the first event.
            SnapshotValidator.Check(checkpoint.Snapshot);
        }
        catch (InvalidDataException ex)
        {
            throw new InvalidDataException($"{source} holds a damaged model snapshot: {ex.Message}", ex);
        }
        return checkpoint;
    }

    /// <summary>The checkpoint as the UTF-8 JSON a file holds (the bytes the checkpoint topic carries too).</summary>
    public static byte[] Serialize(PartitionCheckpoint checkpoint)
    {
        var json = new ArrayBufferWriter<byte>();
        Serialize(checkpoint, json);
        return json.WrittenSpan.ToArray();
    }

    /// <summary>
    /// The same bytes as <see cref="Serialize(PartitionCheckpoint)"/>, written into
    /// <paramref name="into"/> after clearing it: the worker's checkpoint writer keeps one buffer
    /// for all its checkpoints rather than a new array of megabytes for each partition, which
    /// went to the large-object heap and brought blocking gen2 collections nearer.
    /// </summary>
    public static void Serialize(PartitionCheckpoint checkpoint, ArrayBufferWriter<byte> into)
    {
        ArgumentNullException.ThrowIfNull(checkpoint);
        ArgumentNullException.ThrowIfNull(into);
        // The snapshot's own marker is stamped by its writer; this layout embeds it directly.
        checkpoint.Snapshot.Format = EngineSnapshot.FormatName;
        checkpoint.Snapshot.FormatVersion = EngineSnapshot.CurrentVersion;
        into.ResetWrittenCount();
        var options = CheckpointJsonContext.Default.Options;
        using var writer = new Utf8JsonWriter(into, new JsonWriterOptions { Encoder = options.Encoder, Indented = options.WriteIndented });
        JsonSerializer.Serialize(writer, checkpoint, CheckpointJsonContext.Default.PartitionCheckpoint);
    }

    /// <summary>
    /// Writes a checkpoint atomically (temporary file, flush to disk, rename) unless the folder
    /// already holds one of the partition that is ahead of it, by events offset and then labels
    /// offset (the order <c>CheckpointLoader</c> uses): two owners of one partition at once (a
    /// member the group moved on from that has not noticed yet) must never put it back in time.
    /// Read, compare and rename run under the partition's <see cref="CheckpointLock"/>, held
    /// across processes, and so does <paramref name="alongside"/> (the checkpoint topic's copy),
    /// which runs only when the file was written. <paramref name="json"/> is the
    /// <see cref="Serialize(PartitionCheckpoint)"/> form, made once for the file and the topic. Returns null when
    /// written, or the positions of the newer checkpoint that was kept.
    /// </summary>
    /// <remarks>
    /// The temporary name is <c>NAME.PID.tmp</c>, as for the replay outputs, and the file is
    /// created new, so nothing is opened through a link placed there; under the lock two workers
    /// never write one partition's temporary file at once, even with equal process ids (two
    /// containers on one volume). Throws <see cref="IOException"/> when the lock stays held
    /// elsewhere for <see cref="LockLimit"/>.
    /// </remarks>
    public (long EventsOffset, long LabelsOffset)? Write(PartitionCheckpoint checkpoint, ReadOnlyMemory<byte> json, Action? alongside = null)
    {
        ArgumentNullException.ThrowIfNull(checkpoint);
        string path = PathOf(checkpoint.EventsTopic, checkpoint.Partition);
        using var held = CheckpointLock.Take(path, LockLimit);
        if (Positions(path) is { } kept && kept.CompareTo((checkpoint.EventsOffset, checkpoint.LabelsOffset)) > 0)
        {
            return kept;
        }
        string temporary = TemporaryName(path);
        // Only a leftover of this process id (a write that failed, or a reused id) has this name.
        File.Delete(temporary);
        bool renamed = false;
        try
        {
            using (var file = new FileStream(temporary, FileMode.CreateNew, FileAccess.Write, FileShare.None, 1 << 16))
            {
                file.Write(json.Span);
                file.Flush(flushToDisk: true);
            }
            File.Move(temporary, path, overwrite: true);
            renamed = true;
        }
        finally
        {
            if (!renamed)
            {
                TryDelete(temporary);
            }
        }
        alongside?.Invoke();
        return null;
    }

    /// <summary>
    /// How long a write waits for another process's hold on the partition: its file write and
    /// its checkpoint-topic copy, whose two acknowledgements may take a minute each.
    /// </summary>
    public static readonly TimeSpan LockLimit = TimeSpan.FromSeconds(150);

    /// <summary>
    /// The positions of the checkpoint at <paramref name="path"/>, or null when there is none or
    /// it is unreadable (a damaged file is replaced; refusing it is the loader's job). Only its
    /// start is read: the offsets come before the snapshot, which runs to megabytes.
    /// </summary>
    private static (long EventsOffset, long LabelsOffset)? Positions(string path)
    {
        byte[] head;
        try
        {
            using var file = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, bufferSize: 1);
            head = new byte[(int)Math.Min(file.Length, HeadBytes)];
            file.ReadExactly(head);
        }
        catch (Exception ex) when (ex is FileNotFoundException or DirectoryNotFoundException)
        {
            return null;
        }
        long? events = null, labels = null;
        try
        {
            var reader = new Utf8JsonReader(head, isFinalBlock: head.Length < HeadBytes, default);
            while ((events is null || labels is null) && reader.Read())
            {
                if (reader.TokenType != JsonTokenType.PropertyName || reader.CurrentDepth != 1)
                {
                    continue;
                }
                bool isEvents = reader.ValueTextEquals("events_offset"u8);
                bool isLabels = reader.ValueTextEquals("labels_offset"u8);
                if (reader.ValueTextEquals("snapshot"u8) || !reader.Read())
                {
                    break;
                }
                if ((isEvents || isLabels) && reader.TokenType == JsonTokenType.Number && reader.TryGetInt64(out long value))
                {
                    (isEvents ? ref events : ref labels) = value;
                }
            }
        }
        catch (JsonException)
        {
            return null;
        }
        return events is { } e && labels is { } l ? (e, l) : null;
    }

    private const int HeadBytes = 4096;

    /// <summary>
    /// Removes the temporary files killed writers left in the folder (<c>NAME.PID.tmp</c> of a
    /// checkpoint) and returns how many. A file is left alone when its process id is this
    /// process's (its own write may be in flight) or a live process's (another worker sharing
    /// the folder), and when its partition's lock is held (a writer inside its write, perhaps in
    /// another PID namespace). Files that vanish or resist removal meanwhile are skipped.
    /// </summary>
    public int RemoveLeftovers()
    {
        int removed = 0;
        IEnumerable<string> files;
        try
        {
            files = System.IO.Directory.EnumerateFiles(_directory, "*.checkpoint.json.*.tmp").ToList();
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return 0;
        }
        foreach (string file in files)
        {
            var match = LeftoverName().Match(Path.GetFileName(file));
            if (!match.Success || !int.TryParse(match.Groups[2].ValueSpan, System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out int pid)
                || pid == Environment.ProcessId || IsRunning(pid))
            {
                continue;
            }
            using var held = CheckpointLock.TryTake(Path.Combine(_directory, match.Groups[1].Value));
            if (held is null)
            {
                continue;
            }
            try
            {
                if (File.Exists(file))
                {
                    File.Delete(file);
                    removed++;
                }
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                // Left for the next start or assignment; it is never read.
            }
        }
        return removed;
    }

    private static bool IsRunning(int pid)
    {
        try
        {
            using var process = System.Diagnostics.Process.GetProcessById(pid);
            return !process.HasExited;
        }
        catch (Exception ex) when (ex is ArgumentException or InvalidOperationException or System.ComponentModel.Win32Exception or NotSupportedException)
        {
            return false;
        }
    }

    // NAME.PID.tmp, as TemporaryName makes it, for a checkpoint file NAME.
    [System.Text.RegularExpressions.GeneratedRegex(@"^(.+\.checkpoint\.json)\.([0-9]{1,10})\.tmp$", System.Text.RegularExpressions.RegexOptions.CultureInvariant)]
    private static partial System.Text.RegularExpressions.Regex LeftoverName();

    /// <summary>The temporary name this process writes <paramref name="path"/> through.</summary>
    public static string TemporaryName(string path) => $"{path}.{Environment.ProcessId}.tmp";

    private static void TryDelete(string path)
    {
        try
        {
            File.Delete(path);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            // The write's own error is the one to report; a leftover is replaced by the next write.
        }
    }

    private static string Sanitise(string topic) =>
        string.Concat(topic.Select(c => char.IsLetterOrDigit(c) || c is '-' or '_' or '.' ? c : '_'));
}
