using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Options;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Finds the checkpoint to restore for partitions just assigned: the folder's file and, with
/// a checkpoint topic, every writer's copy on it; the newest one wins, by events offset and
/// then labels offset (both only grow), and the file on a tie (the two hold the same state then). So a
/// worker without the folder takes a partition over from the topic, and a worker with an old
/// file from a partition it owned long ago does not go back in time.
/// </summary>
internal sealed class CheckpointLoader(KafkaOptions options, CheckpointStore store, TopicCheckpointWriter? topic)
{
    /// <summary>
    /// The checkpoint of each of <paramref name="partitions"/>, null where there is none.
    /// Throws <see cref="KafkaWorkerException"/>, with the fix, when the file or a manifest is
    /// unreadable, or when the topic's copies ahead of the file are all incomplete or damaged
    /// and there is no file: resuming from nothing would double-apply labels.
    /// </summary>
    public Dictionary<int, PartitionCheckpoint?> Load(IReadOnlyCollection<int> partitions)
    {
        var assembler = topic is null ? null : TopicCheckpointReader.Read(options, topic, partitions);
        var loaded = new Dictionary<int, PartitionCheckpoint?>();
        foreach (int partition in partitions)
        {
            PartitionCheckpoint? file;
            try
            {
                file = store.Read(options.EventsTopic, partition);
            }
            catch (InvalidDataException ex)
            {
                throw new KafkaWorkerException($"{ex.Message}; move it aside to start that partition with fresh models", ex);
            }
            loaded[partition] = assembler is null ? file : Newer(assembler, topic!, partition, file);
        }
        return loaded;
    }

    /// <remarks>
    /// Every writer's manifest of the partition is a candidate, the one ahead first. When one
    /// ahead of the file is incomplete or damaged, the next one behind it is tried, then the
    /// file, with a warning: restore seeks the events and the labels to the restored
    /// checkpoint's own offsets (the committed offset serves only a partition without one), so
    /// an older complete checkpoint predicts the records after it again (at least once, as
    /// after a restart) and applies each label once. A damaged manifest ahead is what a new
    /// owner's deletion of another writer's keys leaves when that writer, a zombie, wrote again
    /// meanwhile; stopping there would stop the partition for a race the data survives. Only
    /// when no complete checkpoint is left does the worker stop: resuming from nothing would
    /// start fresh models at the committed offset with the labels from the start.
    /// </remarks>
    private PartitionCheckpoint? Newer(TopicCheckpointAssembler assembler, TopicCheckpointWriter topic, int partition, PartitionCheckpoint? file)
    {
        List<CheckpointManifest> manifests;
        try
        {
            manifests = assembler.Manifests(partition);
            topic.Remember(partition, assembler);
        }
        catch (InvalidDataException ex)
        {
            // An unreadable manifest has no positions to compare: it may be the one ahead.
            throw new KafkaWorkerException($"{ex.Message}; delete it (a tombstone for that key on topic '{topic.Topic}') and move any file for the partition aside to start it with fresh models", ex);
        }
        (InvalidDataException Error, string Key)? skipped = null;
        foreach (var manifest in manifests)
        {
            if (file is not null && (file.EventsOffset, file.LabelsOffset).CompareTo((manifest.EventsOffset, manifest.LabelsOffset)) >= 0)
            {
                break;
            }
            try
            {
                var checkpoint = Restore(assembler, topic, partition, manifest);
                Log.Information("Partition {Partition}: restoring the checkpoint topic's copy (writer {Writer}, generation {Generation}, {Chunks} chunks, events offset {EventsOffset}); the folder's is {FileOffset}",
                    partition, manifest.Writer.Length == 0 ? "of the layout before per-writer keys" : manifest.Writer, manifest.Generation, manifest.Chunks, manifest.EventsOffset, file is null ? "missing" : $"at events offset {file.EventsOffset}");
                return checkpoint;
            }
            catch (InvalidDataException ex)
            {
                Log.Warning("Partition {Partition}: {Problem:l}; trying the next checkpoint behind it (its state matches its offsets: records after it are predicted again, no label is applied twice)", partition, ex.Message);
                skipped ??= (ex, TopicCheckpointCodec.ManifestKey(options.EventsTopic, partition, manifest.Writer));
            }
        }
        if (file is null && skipped is { } failed)
        {
            throw new KafkaWorkerException($"{failed.Error.Message}, and no complete checkpoint of the partition is behind it; delete it (a tombstone for key '{failed.Key}' on topic '{topic.Topic}') and move any file for the partition aside to start it with fresh models", failed.Error);
        }
        return file;
    }

    private PartitionCheckpoint Restore(TopicCheckpointAssembler assembler, TopicCheckpointWriter topic, int partition, CheckpointManifest manifest)
    {
        string source = $"the checkpoint of {options.EventsTopic} partition {partition} on topic '{topic.Topic}' (writer '{manifest.Writer}', generation {manifest.Generation})";
        using var json = new MemoryStream(assembler.Assemble(manifest), writable: false);
        var checkpoint = CheckpointStore.Parse(json, source);
        if (checkpoint.EventsTopic != options.EventsTopic || checkpoint.Partition != partition
            || checkpoint.EventsOffset != manifest.EventsOffset || checkpoint.LabelsOffset != manifest.LabelsOffset)
        {
            throw new InvalidDataException($"{source} does not match its manifest");
        }
        return checkpoint;
    }
}
