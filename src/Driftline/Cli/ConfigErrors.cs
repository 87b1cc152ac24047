using Driftline.Core.Options;

namespace Driftline.Cli;

/// <summary>Prints configuration mistakes the same way for every command.</summary>
internal static class ConfigErrors
{
    /// <summary>Writes each error on its own line, naming the option and the fix, and returns <see cref="ExitCode.Config"/>.</summary>
    public static int Report(TextWriter error, string? path, IReadOnlyList<OptionError> errors)
    {
        error.WriteLine(path is null ? "driftline: the configuration is invalid:" : $"driftline: the configuration in '{path}' is invalid:");
        foreach (var e in errors)
        {
            error.WriteLine($"  {e}");
        }
        return ExitCode.Config;
    }
}
