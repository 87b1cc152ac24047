namespace Driftline.Cli;

/// <summary>Opens the FILE argument of a command: a path, or <c>-</c> for standard input.</summary>
internal static class InputFiles
{
    /// <summary>Opens <paramref name="file"/>, or returns null after writing one clear message.</summary>
    public static Stream? Open(string file, CommandContext context)
    {
        if (file == "-")
        {
            return context.StandardInput();
        }
        if (Directory.Exists(file))
        {
            context.Error.WriteLine($"driftline: '{file}' is a folder; give the file to read");
            return null;
        }
        try
        {
            return new FileStream(file, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 16, FileOptions.SequentialScan);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            context.Error.WriteLine($"driftline: cannot read '{file}': {ex.Message}");
            return null;
        }
    }
}
