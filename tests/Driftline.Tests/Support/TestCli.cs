namespace Driftline.Tests.Support;

/// <summary>Runs <c>driftline</c> in-process with captured output.</summary>
internal static class TestCli
{
    public static async Task<(int Code, string Out, string Error)> RunAsync(params string[] args)
    {
        var run = await Cli.CliRun.RunAsync(args);
        return (run.ExitCode, run.Out, run.Error);
    }

    /// <summary>The repository root (the folder holding Driftline.sln).</summary>
    public static string RepositoryRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "Driftline.sln")))
        {
            dir = dir.Parent;
        }
        return dir?.FullName ?? throw new InvalidOperationException("Driftline.sln not found above " + AppContext.BaseDirectory);
    }
}
