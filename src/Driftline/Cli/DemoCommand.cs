using System.CommandLine;
using Driftline.Demo;
using Driftline.Output;

namespace Driftline.Cli;

/// <summary><c>driftline demo --out FILE</c>: writes the invented delivery-lateness stream.</summary>
internal sealed class DemoCommand(CommandContext context)
{
    /// <summary>The command-line definition.</summary>
    public Command Build()
    {
        var output = new Option<string>("--out") { Description = "File to write (JSON lines); - writes standard output", Required = true };
        var orders = new Option<int>("--orders") { Description = "Orders in the stream", DefaultValueFactory = _ => 60_000 };
        var seed = new Option<int>("--seed") { Description = "Random seed: the same seed writes the same file", DefaultValueFactory = _ => 7 };
        var command = new Command("demo", "Write the invented demo stream: late food deliveries, delayed labels, a storm partway") { output, orders, seed };
        command.SetAction(result => Run(result.GetValue(output)!, result.GetValue(orders), result.GetValue(seed)));
        return command;
    }

    /// <summary>Writes the stream; returns the exit code.</summary>
    public int Run(string path, int orders, int seed)
    {
        if (orders < 1)
        {
            context.Error.WriteLine("driftline: --orders must be at least 1");
            return ExitCode.Usage;
        }
        var scenario = new DemoScenario(seed) { Orders = orders };
        try
        {
            if (path == "-")
            {
                using var stdout = Console.OpenStandardOutput();
                using var buffered = new BufferedStream(stdout, 1 << 16);
                scenario.Write(buffered);
                return ExitCode.Ok;
            }
            if (Directory.Exists(path))
            {
                throw new OutputException(path, "it is a folder; --out names the file to write, such as " + Path.Combine(path, "demo.jsonl"));
            }
            string? folder = Path.GetDirectoryName(Path.GetFullPath(path));
            if (folder is not null)
            {
                OutputFolder.Create(folder);
            }
            OutputFile.Write(path, scenario.Write, context.CreateOutput);
        }
        catch (OutputException ex)
        {
            context.Error.WriteLine(ex.Line);
            return ExitCode.Input;
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            context.Error.WriteLine($"driftline: cannot write '{path}': {ex.Message}");
            return ExitCode.Input;
        }
        context.Out.WriteLine($"Wrote {orders:N0} orders to {path} (labels: about a third late, 2% never arrive; storm from 55% to 75% of the stream).");
        return ExitCode.Ok;
    }
}
