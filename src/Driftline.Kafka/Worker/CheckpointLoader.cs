using Driftline.Kafka.Checkpoints;
using Driftline.Kafka.Options;
using Serilog;

namespace Driftline.Kafka.Worker;

/// <summary>
/// Finds the checkpoint to restore for partitions just assigned: the folder's file and, with
/// a checkpoint topic, the topic's copy; the newer one wins, by events offset and then labels
/// offset (both only grow), and the file on a tie (the two hold the same state then). So a
/// worker without the folder takes a partition over from the topic, and a worker with an old
/// file from a partition it owned long ago does not go back in time.
/// </summary>
internal sealed class CheckpointLoader(KafkaOptions options, CheckpointStore store, TopicCheckpointWriter? topic)
{
    /// <summary>
    /// The checkpoint of each of <paramref name="partitions"/>, null where there is none.
    /// Throws <see cref="KafkaWorkerException"/>, with the fix, when the one to restore is
    /// unreadable, incomplete or damaged: resuming from nothing would double-apply labels.
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

    private PartitionCheckpoint? Newer(TopicCheckpointAssembler assembler, TopicCheckpointWriter topic, int partition, PartitionCheckpoint? file)
    {
        string key = TopicCheckpointCodec.ManifestKey(options.EventsTopic, partition);
        try
        {
            var manifest = assembler.Manifest(partition);
            topic.Remember(partition, manifest, assembler.SlotExtent(partition, 0), assembler.SlotExtent(partition, 1));
            if (manifest is null || (file is not null && (file.EventsOffset, file.LabelsOffset).CompareTo((manifest.EventsOffset, manifest.LabelsOffset)) >= 0))
            {
                return file;
            }
            string source = $"the checkpoint of {options.EventsTopic} partition {partition} on topic '{topic.Topic}' (generation {manifest.Generation})";
            using var json = new MemoryStream(assembler.Assemble(manifest), writable: false);
            var checkpoint = CheckpointStore.Parse(json, source);
            if (checkpoint.EventsTopic != options.EventsTopic || checkpoint.Partition != partition
                || checkpoint.EventsOffset != manifest.EventsOffset || checkpoint.LabelsOffset != manifest.LabelsOffset)
            {
                throw new InvalidDataException($"{source} does not match its manifest");
            }
            Log.Information("Partition {Partition}: restoring the checkpoint topic's copy (generation {Generation}, {Chunks} chunks, events offset {EventsOffset}); the folder's is {FileOffset}",
                partition, manifest.Generation, manifest.Chunks, manifest.EventsOffset, file is null ? "missing" : $"at events offset {file.EventsOffset}");
            return checkpoint;
        }
        catch (InvalidDataException ex)
        {
            throw new KafkaWorkerException($"{ex.Message}; delete it (a tombstone for key '{key}' on topic '{topic.Topic}') and move any file for the partition aside to start it with fresh models", ex);
        }
    }
}
