using System.Globalization;

namespace Driftline.Cli;

/// <summary>
/// Where a short run's time goes, for the start-up benchmark: with the environment variable
/// <c>DRIFTLINE_PHASES=1</c> each phase's end is noted with the wall clock, and the process
/// prints them to standard error as it exits (<c>phase NAME UNIX-MS</c>), so a caller that
/// noted the time it started the process can tell the runtime's start from the program's
/// work. Off (the default), a mark is one static field read. Not an option of the tool: it
/// changes no output file and is read once, directly from the process environment.
/// </summary>
internal static class PhaseMarks
{
    /// <summary>The environment variable that turns the marks on.</summary>
    public const string Variable = "DRIFTLINE_PHASES";

    private static readonly bool Enabled = Environment.GetEnvironmentVariable(Variable) == "1";
    private static readonly List<(string Name, DateTime At)> Marks = [];

    /// <summary>Notes that phase <paramref name="name"/> ended now (when enabled; thread-safe).</summary>
    public static void Mark(string name)
    {
        if (!Enabled)
        {
            return;
        }
        var now = DateTime.UtcNow;
        lock (Marks)
        {
            Marks.Add((name, now));
        }
    }

    /// <summary>Prints the marks, one a line, to <paramref name="error"/> (nothing when disabled).</summary>
    public static void Write(TextWriter error)
    {
        if (!Enabled)
        {
            return;
        }
        lock (Marks)
        {
            foreach (var (name, at) in Marks)
            {
                error.WriteLine(string.Create(CultureInfo.InvariantCulture, $"phase {name} {(at - DateTime.UnixEpoch).TotalMilliseconds:0.000}"));
            }
        }
    }
}
