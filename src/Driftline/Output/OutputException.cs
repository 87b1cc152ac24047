namespace Driftline.Output;

/// <summary>
/// An output file could not be written: the disk is full, a folder has its name, or the
/// folder is not writable. Commands turn it into one line and exit code 4.
/// </summary>
internal sealed class OutputException : IOException
{
    /// <summary>Wraps the failure <paramref name="inner"/> of writing <paramref name="path"/>.</summary>
    public OutputException(string path, Exception inner)
        : base(Reason(inner), inner) => FilePath = path;

    /// <summary>A failure of writing <paramref name="path"/> for <paramref name="reason"/>.</summary>
    public OutputException(string path, string reason)
        : base(reason) => FilePath = path;

    /// <summary>The file that could not be written.</summary>
    public string FilePath { get; }

    /// <summary>The one line a command prints.</summary>
    public string Line => $"driftline: cannot write '{FilePath}': {Message}";

    // The runtime's messages end with the path again (" : '/x/y'"), which the line already names.
    private static string Reason(Exception inner)
    {
        if (inner is ArgumentOutOfRangeException)
        {
            // EFBIG, as the runtime reports it ("Specified file length was too large ...").
            return "the file would be larger than the file system or the process's file-size limit (ulimit -f) allows";
        }
        string message = inner.Message;
        int at = message.IndexOf(" : '", StringComparison.Ordinal);
        return at > 0 ? message[..at] : message;
    }
}
