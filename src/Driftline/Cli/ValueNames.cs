using System.CommandLine;

namespace Driftline.Cli;

/// <summary>
/// The word help shows for each option's value (<c>--out &lt;DIR&gt;</c>, not the parser's
/// default <c>--out &lt;out&gt;</c>), set in one place for every command so an option added
/// later gets one too.
/// </summary>
internal static class ValueNames
{
    /// <summary>By option, for every command unless <see cref="ByCommand"/> says otherwise.</summary>
    private static readonly Dictionary<string, string> ByOption = new(StringComparer.Ordinal)
    {
        ["--out"] = "DIR",
        ["--config"] = "FILE",
        ["--warm-start"] = "MODEL",
        ["--ridge"] = "L2",
        ["--orders"] = "N",
        ["--seed"] = "SEED",
        ["--top"] = "N",
        ["--bootstrap"] = "HOST:PORT[,HOST:PORT]",
        ["--group"] = "GROUP",
        ["--events-topic"] = "TOPIC",
        ["--labels-topic"] = "TOPIC",
        ["--predictions-topic"] = "TOPIC",
        ["--alerts-topic"] = "TOPIC",
        ["--dead-letter-topic"] = "TOPIC",
        ["--checkpoint-dir"] = "DIR",
        ["--alerts-file"] = "FILE",
    };

    /// <summary>Where one command's option takes something else (fit and demo write one file, not a folder).</summary>
    private static readonly Dictionary<(string Command, string Option), string> ByCommand = new()
    {
        [("fit", "--out")] = "MODEL",
        [("demo", "--out")] = "FILE",
    };

    /// <summary>Sets the help name of every option below <paramref name="root"/> that takes a value and has none.</summary>
    public static void Apply(Command root)
    {
        foreach (var command in root.Subcommands)
        {
            foreach (var option in command.Options.Where(o => o.HelpName is null && o.ValueType != typeof(bool) && o.Name.StartsWith("--", StringComparison.Ordinal)))
            {
                option.HelpName = ByCommand.GetValueOrDefault((command.Name, option.Name))
                    ?? ByOption.GetValueOrDefault(option.Name)
                    ?? option.Name.TrimStart('-').ToUpperInvariant();
            }
            Apply(command);
        }
    }
}
