using System.Text.Json;
using System.Text.Json.Serialization;
using Driftline.Core.Snapshots;

namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// Per-partition checkpoints as JSON files in one folder, named after the events topic and
/// partition. A write goes to a temporary file that is flushed to disk and then renamed over
/// the old one, so a crash leaves either the old checkpoint or the new one, never half of one.
/// </summary>
internal sealed class CheckpointStore
{
    private static readonly JsonSerializerOptions Json = new()
    {
        PropertyNamingPolicy = JsonNamingPolicy.SnakeCaseLower,
        Converters = { new EnumNamesOnly() },
        NumberHandling = JsonNumberHandling.AllowNamedFloatingPointLiterals,
    };

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
            checkpoint = JsonSerializer.Deserialize<PartitionCheckpoint>(json, Json);
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
        ArgumentNullException.ThrowIfNull(checkpoint);
        // The snapshot's own marker is stamped by its writer; this layout embeds it directly.
        checkpoint.Snapshot.Format = EngineSnapshot.FormatName;
        checkpoint.Snapshot.FormatVersion = EngineSnapshot.CurrentVersion;
        return JsonSerializer.SerializeToUtf8Bytes(checkpoint, Json);
    }

    /// <summary>
    /// Writes a checkpoint atomically (temporary file, flush to disk, rename).
    /// <paramref name="json"/> is its <see cref="Serialize"/> form, made once for the file and the topic.
    /// The temporary name is <c>NAME.PID.tmp</c>, as for the replay outputs: two workers sharing
    /// the folder (a takeover on a shared volume) never write through each other's file, and the
    /// file is created new, so nothing is opened through a link placed there.
    /// </summary>
    public void Write(PartitionCheckpoint checkpoint, byte[] json)
    {
        ArgumentNullException.ThrowIfNull(checkpoint);
        ArgumentNullException.ThrowIfNull(json);
        string path = PathOf(checkpoint.EventsTopic, checkpoint.Partition);
        string temporary = TemporaryName(path);
        // Only this process's own leftover (a write that failed, or a reused process id) has this name.
        File.Delete(temporary);
        bool renamed = false;
        try
        {
            using (var file = new FileStream(temporary, FileMode.CreateNew, FileAccess.Write, FileShare.None, 1 << 16))
            {
                file.Write(json);
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
    }

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
