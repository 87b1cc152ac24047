namespace Driftline.Kafka.Checkpoints;

/// <summary>
/// An exclusive hold on one partition's checkpoint among every process that shares the folder:
/// the file <c>NAME.lock</c> beside the checkpoint, opened with <see cref="FileShare.None"/>.
/// On Linux and macOS .NET takes an <c>flock</c> on it (on Windows the share mode itself
/// excludes), which the system drops when the process ends, so a killed worker never leaves
/// it held. The lock file stays: deleting it would let one process lock the old file while
/// another creates and locks a new one of the same name.
/// </summary>
internal sealed class CheckpointLock : IDisposable
{
    private static readonly TimeSpan Pause = TimeSpan.FromMilliseconds(10);

    private readonly FileStream _file;

    private CheckpointLock(FileStream file) => _file = file;

    /// <summary>The lock file of the checkpoint at <paramref name="checkpointPath"/>.</summary>
    public static string PathOf(string checkpointPath) => checkpointPath + ".lock";

    /// <summary>
    /// Waits until the lock is free and takes it. Throws <see cref="IOException"/> after
    /// <paramref name="limit"/> (another process holding it that long is stuck inside a write),
    /// and at once when the folder refuses the lock file.
    /// </summary>
    public static CheckpointLock Take(string checkpointPath, TimeSpan limit)
    {
        var clock = System.Diagnostics.Stopwatch.StartNew();
        while (true)
        {
            try
            {
                return new CheckpointLock(Open(checkpointPath));
            }
            catch (IOException ex) when (ex is not (FileNotFoundException or DirectoryNotFoundException or PathTooLongException))
            {
                if (clock.Elapsed >= limit)
                {
                    throw new IOException($"the lock '{PathOf(checkpointPath)}' stayed held by another process for {limit.TotalSeconds:0} s: {ex.Message}", ex);
                }
                Thread.Sleep(Pause);
            }
        }
    }

    /// <summary>Takes the lock if it is free now, or returns null (held elsewhere, or the lock file cannot be opened).</summary>
    public static CheckpointLock? TryTake(string checkpointPath)
    {
        try
        {
            return new CheckpointLock(Open(checkpointPath));
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            return null;
        }
    }

    /// <summary>Releases the lock.</summary>
    public void Dispose() => _file.Dispose();

    private static FileStream Open(string checkpointPath) =>
        new(PathOf(checkpointPath), FileMode.OpenOrCreate, FileAccess.ReadWrite, FileShare.None, bufferSize: 1);
}
