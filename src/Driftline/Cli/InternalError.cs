using System.Globalization;
using System.Reflection;
using Serilog;

namespace Driftline.Cli;

/// <summary>
/// What the user sees when Driftline itself fails (an exception no input, file or setting
/// explains): one line naming the exception and a file that holds the whole trace, never a
/// stack trace on the terminal. Exit code 1.
/// </summary>
internal static class InternalError
{
    /// <summary>
    /// Writes the trace file (the arguments, the time, the version and the exception) to the
    /// temporary folder and one line to <paramref name="error"/>. If the file cannot be written,
    /// the line says so and the trace goes to the log at Debug only.
    /// </summary>
    public static async Task ReportAsync(Exception exception, string[] args, TextWriter error)
    {
        Log.Debug(exception, "Internal error");
        string summary = $"{exception.GetType().Name}: {OneLine(exception.Message)}";
        string where;
        try
        {
            where = $"trace in '{WriteTrace(exception, args)}'";
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            where = $"the trace could not be saved ({OneLine(ex.Message)})";
        }
        await error.WriteLineAsync($"driftline: internal error (a bug in Driftline): {summary}; {where}").ConfigureAwait(false);
    }

    private static string WriteTrace(Exception exception, string[] args)
    {
        var now = DateTime.UtcNow;
        string path = Path.Combine(Path.GetTempPath(),
            $"driftline-error-{now.ToString("yyyyMMdd'T'HHmmss'Z'", CultureInfo.InvariantCulture)}-{Environment.ProcessId}.txt");
        string version = typeof(InternalError).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion ?? "unknown";
        string text = string.Join('\n',
            "Driftline internal error: please attach this file to a bug report.",
            $"time: {now.ToString("O", CultureInfo.InvariantCulture)}",
            $"version: {version}",
            $"runtime: {System.Runtime.InteropServices.RuntimeInformation.FrameworkDescription} on {System.Runtime.InteropServices.RuntimeInformation.OSDescription}",
            $"arguments: {string.Join(' ', args)}",
            "",
            exception.ToString(),
            "");
        File.WriteAllText(path, text);
        return path;
    }

    private static string OneLine(string message) => message.ReplaceLineEndings(" ").Trim();
}
