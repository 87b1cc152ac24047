using Driftline.Core.Options;

namespace Driftline.Cli;

/// <summary>Prints configuration mistakes the same way for every command.</summary>
internal static class ConfigErrors
{
    /// <summary>
    /// Writes each error on one line of its own, naming where it was set (the file, or the
    /// environment variable), the option and the fix, and returns <see cref="ExitCode.Config"/>.
    /// An error of unknown origin is put on <paramref name="path"/>, the configuration being loaded.
    /// </summary>
    public static int Report(TextWriter error, string? path, IReadOnlyList<OptionError> errors)
    {
        foreach (var e in errors)
        {
            string? source = e.Source ?? (path is null ? null : $"config {path}");
            error.WriteLine(string.IsNullOrEmpty(source) ? $"driftline: {e}" : $"driftline: {source}: {e}");
        }
        return ExitCode.Config;
    }
}
