using Driftline.Core.Options;
using Microsoft.Extensions.Configuration;

namespace Driftline.Configuration;

/// <summary>
/// Builds <see cref="DriftlineOptions"/> the .NET way: defaults, then a JSON file, then
/// environment variables prefixed <c>DRIFTLINE_</c> (sections joined by <c>__</c>, e.g.
/// <c>DRIFTLINE_Model__HashBits=20</c>). Unknown keys are errors, so a typo is reported
/// instead of silently ignored.
/// </summary>
internal static class ConfigLoader
{
    /// <summary>Prefix of environment overrides.</summary>
    public const string EnvironmentPrefix = "DRIFTLINE_";

    /// <summary>
    /// Sections read by the live worker's host, not by the core (<c>run</c> binds them
    /// itself), so one file serves <c>run</c>, <c>replay</c> and <c>check</c>.
    /// </summary>
    public static readonly string[] HostSections = ["Kafka", "Worker"];

    /// <summary>
    /// Loads and validates. Returns the options, or null with every mistake found in
    /// <paramref name="errors"/> (each names the option and the fix).
    /// </summary>
    public static DriftlineOptions? Load(string? path, IDictionary<string, string?>? environment, out IReadOnlyList<OptionError> errors)
    {
        var root = Build(path, environment, out var fileError);
        if (fileError is not null)
        {
            errors = [fileError];
            return null;
        }
        return Bind(root!, out errors);
    }

    /// <summary>Binds and validates an already built configuration.</summary>
    public static DriftlineOptions? Bind(IConfiguration configuration, out IReadOnlyList<OptionError> errors)
    {
        var options = new DriftlineOptions();
        var core = new ConfigurationBuilder()
            .AddInMemoryCollection(configuration.AsEnumerable().Where(kv => !HostSections.Any(h => kv.Key.Equals(h, StringComparison.OrdinalIgnoreCase) || kv.Key.StartsWith(h + ":", StringComparison.OrdinalIgnoreCase))))
            .Build();
        try
        {
            core.Bind(options, o => o.ErrorOnUnknownConfiguration = true);
        }
        catch (InvalidOperationException ex)
        {
            errors = [Describe(ex)];
            return null;
        }
        errors = options.Validate();
        return errors.Count == 0 ? options : null;
    }

    /// <summary>The configuration tree from the file and environment, without binding.</summary>
    public static IConfigurationRoot? Build(string? path, IDictionary<string, string?>? environment, out OptionError? error)
    {
        error = null;
        var builder = new ConfigurationBuilder();
        if (path is not null)
        {
            var full = Path.GetFullPath(path);
            if (!File.Exists(full))
            {
                error = new OptionError("--config", $"file '{path}' does not exist", "Give the path of a JSON configuration file (see config/ for examples)");
                return null;
            }
            builder.AddJsonFile(full, optional: false, reloadOnChange: false);
        }
        if (environment is not null)
        {
            var prefixed = environment
                .Where(kv => kv.Key.StartsWith(EnvironmentPrefix, StringComparison.OrdinalIgnoreCase))
                .ToDictionary(kv => kv.Key[EnvironmentPrefix.Length..].Replace("__", ":", StringComparison.Ordinal), kv => kv.Value);
            builder.AddInMemoryCollection(prefixed);
        }
        try
        {
            return builder.Build();
        }
        catch (InvalidDataException ex)
        {
            error = new OptionError("--config", $"file '{path}' is not valid JSON ({ex.InnerException?.Message ?? ex.Message})", "Fix the JSON syntax");
            return null;
        }
        catch (FormatException ex)
        {
            error = new OptionError("--config", $"file '{path}' is not valid JSON ({ex.Message})", "Fix the JSON syntax");
            return null;
        }
    }

    /// <summary>The process environment as a dictionary.</summary>
    public static IDictionary<string, string?> ProcessEnvironment() =>
        Environment.GetEnvironmentVariables().Cast<System.Collections.DictionaryEntry>()
            .ToDictionary(e => (string)e.Key, e => (string?)e.Value);

    private static OptionError Describe(InvalidOperationException ex)
    {
        // The binder's messages name the key ("'Model:HashBitz' was not found" or
        // "Failed to convert configuration value at 'Model:HashBits' to type ...").
        string message = ex.InnerException is not null ? $"{ex.Message} ({ex.InnerException.Message})" : ex.Message;
        string option = ExtractKey(message) ?? "configuration";
        string fix = message.Contains("not found", StringComparison.OrdinalIgnoreCase) || message.Contains("unknown", StringComparison.OrdinalIgnoreCase)
            ? "Remove it or correct its spelling; `driftline check` lists the options"
            : "Give a value of the right type (a number, true/false, or one of the listed names)";
        return new OptionError(option, message, fix);
    }

    private static string? ExtractKey(string message)
    {
        int start = message.IndexOf('\'', StringComparison.Ordinal);
        int end = start >= 0 ? message.IndexOf('\'', start + 1) : -1;
        return end > start ? message[(start + 1)..end] : null;
    }
}
