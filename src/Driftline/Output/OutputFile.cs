namespace Driftline.Output;

/// <summary>
/// One output file that appears whole or not at all. The bytes go to a temporary file beside
/// it (<c>NAME.PID.tmp</c>), are flushed to disk, and the temporary file is renamed over
/// NAME. A rename replaces whatever entry has the name, a symbolic link included, without
/// following it, so a reader sees the old entry or the complete new file, never part of one,
/// and a link placed in the output folder cannot lead a write out of it. Disposing without
/// <see cref="Commit"/> deletes the temporary file. The Kafka checkpoints are written the same way.
/// </summary>
internal sealed class OutputFile : IDisposable
{
    /// <summary>How every temporary name ends.</summary>
    public const string TemporarySuffix = ".tmp";

    private readonly string _temporary;
    private bool _done;

    private readonly OutputStream _stream;

    private OutputFile(string path, string temporary, Stream stream)
    {
        Path = path;
        _temporary = temporary;
        _stream = new OutputStream(stream, path);
    }

    /// <summary>The name the file gets on <see cref="Commit"/>.</summary>
    public string Path { get; }

    /// <summary>Where to write the content; its failures are <see cref="OutputException"/>s naming <see cref="Path"/>.</summary>
    public Stream Stream => _stream;

    /// <summary>
    /// Creates a new file exclusively (O_CREAT | O_EXCL: it fails on any existing entry, a
    /// link included, so nothing is opened through a link). The default for every opener.
    /// </summary>
    public static Stream CreateNew(string path) =>
        new FileStream(path, FileMode.CreateNew, FileAccess.Write, FileShare.Read, 1 << 16);

    /// <summary>The temporary name of <paramref name="path"/> for this process.</summary>
    public static string TemporaryName(string path) => $"{path}.{Environment.ProcessId}{TemporarySuffix}";

    /// <summary>
    /// Starts writing <paramref name="path"/> through its temporary name, opened with
    /// <paramref name="create"/> (tests inject a failing stream; default <see cref="CreateNew"/>).
    /// </summary>
    /// <exception cref="OutputException">The temporary file cannot be created.</exception>
    public static OutputFile Begin(string path, Func<string, Stream>? create = null)
    {
        string temporary = TemporaryName(path);
        try
        {
            RemoveEntry(temporary);
            return new OutputFile(path, temporary, (create ?? CreateNew)(temporary));
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new OutputException(path, ex);
        }
    }

    /// <summary>Writes <paramref name="path"/> whole with <paramref name="write"/>, or leaves it as it was.</summary>
    /// <exception cref="OutputException">Writing, flushing or renaming failed (disk full, a folder in the way, no permission).</exception>
    public static void Write(string path, Action<Stream> write, Func<string, Stream>? create = null)
    {
        ArgumentNullException.ThrowIfNull(write);
        using var file = Begin(path, create);
        try
        {
            write(file.Stream);
        }
        catch (Exception ex) when (ex is (IOException or UnauthorizedAccessException) and not OutputException)
        {
            throw new OutputException(path, ex);
        }
        file.Commit();
    }

    /// <summary>
    /// Opens a file that grows through a run (predictions, alerts, dead letters, metrics):
    /// whatever has the name is removed first (a link is removed, never followed), then the
    /// file is created new with <paramref name="create"/>.
    /// </summary>
    /// <exception cref="OutputException">The name is held by a folder, or the file cannot be created.</exception>
    public static Stream CreateStreamed(string path, Func<string, Stream>? create = null)
    {
        try
        {
            RemoveEntry(path);
            return new OutputStream((create ?? CreateNew)(path), path);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new OutputException(path, ex);
        }
    }

    /// <summary>
    /// Removes the file or link named <paramref name="path"/>, if any. A real folder is left
    /// in place and reported, since it may hold someone's data.
    /// </summary>
    /// <exception cref="OutputException">A folder has the name.</exception>
    public static void RemoveEntry(string path)
    {
        var entry = new FileInfo(path);
        if (entry.LinkTarget is not null)
        {
            // unlink(2) removes the link itself, whether it points at a file, a folder or nothing.
            File.Delete(path);
            return;
        }
        if (Directory.Exists(path))
        {
            throw new OutputException(path, "a folder has this name; remove it or choose another --out");
        }
        if (entry.Exists)
        {
            File.Delete(path);
        }
    }

    /// <summary>Flushes the content to disk and renames the temporary file to <see cref="Path"/>.</summary>
    /// <exception cref="OutputException">Flushing or renaming failed; the temporary file is removed.</exception>
    public void Commit()
    {
        try
        {
            _stream.FlushToDisk();
            _stream.Dispose();
            if (Directory.Exists(Path) && new FileInfo(Path).LinkTarget is null)
            {
                throw new OutputException(Path, "a folder has this name; remove it or choose another name");
            }
            File.Move(_temporary, Path, overwrite: true);
            _done = true;
        }
        catch (Exception ex) when (ex is (IOException or UnauthorizedAccessException) and not OutputException)
        {
            throw new OutputException(Path, ex);
        }
        finally
        {
            if (!_done)
            {
                Abandon();
            }
        }
    }

    /// <summary>Deletes the temporary file unless <see cref="Commit"/> renamed it.</summary>
    public void Dispose()
    {
        if (!_done)
        {
            Abandon();
        }
    }

    private void Abandon()
    {
        _done = true;
        try
        {
            // Closing flushes what is buffered, which fails again on a full disk; the file goes anyway.
            _stream.Dispose();
        }
        catch (OutputException)
        {
        }
        try
        {
            File.Delete(_temporary);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            // Left behind, it is removed at the start of the next run into this folder.
        }
    }
}
