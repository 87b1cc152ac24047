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
        var classes = new Option<bool>("--classes") { Description = "Write the multiclass demo instead: how each delivery ends (on-time, late, failed, cancelled); replay it with config/delivery-outcomes.json" };
        var command = new Command("demo", "Write the invented demo stream: late food deliveries, delayed labels, a storm partway") { output, orders, seed, classes };
        command.SetAction(result => Run(result.GetValue(output)!, result.GetValue(orders), result.GetValue(seed), result.GetValue(classes)));
        return command;
    }

    /// <summary>Writes the stream; returns the exit code.</summary>
    public int Run(string path, int orders, int seed, bool classes = false)
    {
        if (orders < 1)
        {
            context.Error.WriteLine("driftline: --orders must be at least 1");
            return ExitCode.Usage;
        }
        Action<Stream> write = classes ? new DeliveryOutcomeScenario(seed) { Orders = orders }.Write : new DemoScenario(seed) { Orders = orders }.Write;
        try
        {
            if (path == "-")
            {
                using var stdout = Console.OpenStandardOutput();
                using var buffered = new BufferedStream(stdout, 1 << 16);
                write(buffered);
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
            OutputFile.Write(path, write, context.CreateOutput);
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
        context.Out.WriteLine(classes
            ? $"Wrote {orders:N0} deliveries to {path} (outcomes {string.Join(", ", DeliveryOutcomeScenario.Classes)}; about a third known late, 2% never; storm from 55% to 75% of the stream). Replay with --config config/delivery-outcomes.json."
            : $"Wrote {orders:N0} orders to {path} (labels: about a third late, 2% never arrive; storm from 55% to 75% of the stream).");
        return ExitCode.Ok;
    }
}
