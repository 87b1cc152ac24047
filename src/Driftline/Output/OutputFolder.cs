using System.Text.RegularExpressions;

namespace Driftline.Output;

/// <summary>
/// Readies an output folder for a run. Inside <c>--out</c> nothing is followed: a link where a
/// configuration's folder goes is replaced by a real folder, and files are replaced, never
/// opened through a link (see <see cref="OutputFile"/>).
/// </summary>
internal static partial class OutputFolder
{
    /// <summary>
    /// Creates <paramref name="directory"/> (and its parents) unless it exists as a folder.
    /// </summary>
    /// <exception cref="OutputException">A file has the name, or the folder cannot be created.</exception>
    public static void Create(string directory)
    {
        if (File.Exists(directory))
        {
            throw new OutputException(directory, "it is a file; --out names a folder for the outputs");
        }
        try
        {
            Directory.CreateDirectory(directory);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new OutputException(directory, ex);
        }
    }

    /// <summary>
    /// Creates a folder inside <c>--out</c> (one configuration's, when several are compared),
    /// replacing a link of that name by a real folder so no output leaves <c>--out</c>.
    /// </summary>
    /// <exception cref="OutputException">A file has the name, or the folder cannot be created.</exception>
    public static void CreateInside(string directory)
    {
        try
        {
            if (new DirectoryInfo(directory).LinkTarget is not null)
            {
                File.Delete(directory);
            }
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            throw new OutputException(directory, ex);
        }
        Create(directory);
    }

    /// <summary>
    /// Removes what an earlier run left in <paramref name="directory"/> that would look current
    /// beside this run's files: <paramref name="files"/> (its <c>summary.json</c> first, since
    /// that marks a finished run) and the temporary files of any killed run. Called at the start
    /// of a run, before anything is written.
    /// </summary>
    /// <exception cref="OutputException">A folder has one of the names, or a file cannot be removed.</exception>
    public static void RemovePrevious(string directory, IEnumerable<string> files)
    {
        ArgumentNullException.ThrowIfNull(files);
        var names = files.ToList();
        try
        {
            foreach (var name in names)
            {
                OutputFile.RemoveEntry(Path.Combine(directory, name));
            }
            if (!Directory.Exists(directory))
            {
                return;
            }
            foreach (var path in Directory.EnumerateFileSystemEntries(directory, "*" + OutputFile.TemporarySuffix))
            {
                var match = TemporaryName().Match(Path.GetFileName(path));
                if (match.Success && names.Contains(match.Groups[1].Value, StringComparer.Ordinal) && !Directory.Exists(path))
                {
                    File.Delete(path);
                }
            }
        }
        catch (Exception ex) when (ex is (IOException or UnauthorizedAccessException) and not OutputException)
        {
            throw new OutputException(directory, ex);
        }
    }

    // NAME.PID.tmp, as OutputFile.TemporaryName makes it.
    [GeneratedRegex(@"^(.+)\.[0-9]+\.tmp$", RegexOptions.CultureInvariant)]
    private static partial Regex TemporaryName();
}
