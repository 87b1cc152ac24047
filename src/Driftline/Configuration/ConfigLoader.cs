using Driftline.Core.Options;
using Microsoft.Extensions.Configuration;

namespace Driftline.Configuration;

/// <summary>
/// Builds <see cref="DriftlineOptions"/> the .NET way: defaults, then a JSON file, then
/// environment variables prefixed <c>DRIFTLINE_</c> (sections joined by <c>__</c> or <c>:</c>,
/// e.g. <c>DRIFTLINE_Model__HashBits=20</c>). Unknown keys are errors, so a typo is reported
/// instead of silently ignored.
/// </summary>
internal static class ConfigLoader
{
    /// <summary>Prefix of environment overrides (any case).</summary>
    public const string EnvironmentPrefix = "DRIFTLINE_";

    /// <summary>
    /// Sections read by the live worker's host, not by the core (<c>run</c> binds them
    /// itself), so one file serves <c>run</c>, <c>replay</c> and <c>check</c>.
    /// </summary>
    public static readonly string[] HostSections = ["Kafka", "Worker"];

    /// <summary>
    /// Loads and validates. Returns the options, or null with every mistake found in
    /// <paramref name="errors"/> (each names the option, where it was set and the fix).
    /// </summary>
    public static DriftlineOptions? Load(string? path, IDictionary<string, string?>? environment, out IReadOnlyList<OptionError> errors)
    {
        var root = Build(path, environment, out var sources, out errors);
        return root is null ? null : Bind(root, sources, out errors);
    }

    /// <summary>Binds and validates an already built configuration whose keys' origin is unknown.</summary>
    public static DriftlineOptions? Bind(IConfiguration configuration, out IReadOnlyList<OptionError> errors) =>
        Bind(configuration, ConfigSources.None, out errors);

    /// <summary>
    /// Checks every key against <see cref="OptionSchema"/> (the worker's sections too), then
    /// binds the core's sections and validates them.
    /// </summary>
    public static DriftlineOptions? Bind(IConfiguration configuration, ConfigSources sources, out IReadOnlyList<OptionError> errors)
    {
        errors = OptionSchema.Check(configuration, sources);
        if (errors.Count > 0)
        {
            return null;
        }
        var options = new DriftlineOptions();
        var core = new ConfigurationBuilder()
            .AddInMemoryCollection(configuration.AsEnumerable().Where(kv => !HostSections.Any(h => kv.Key.Equals(h, StringComparison.OrdinalIgnoreCase) || kv.Key.StartsWith(h + ":", StringComparison.OrdinalIgnoreCase))))
            .Build();
        if (BindChecked("", sources, () => core.Bind(options, o => o.ErrorOnUnknownConfiguration = true)) is { } failure)
        {
            errors = [failure];
            return null;
        }
        errors = WithSources(options.Validate(), configuration, sources);
        return errors.Count == 0 ? options : null;
    }

    /// <summary>
    /// Runs <paramref name="bind"/> (a binding of one section after <see cref="OptionSchema.Check"/>
    /// passed); returns null, or the one mistake the check could not foresee, worded without the
    /// binder's internals. Each caller binds its own options type where the type is known at
    /// compile time, so the binder's source generator (EnableConfigurationBindingGenerator in
    /// the csproj) writes the binding code and no reflection is needed at run time.
    /// </summary>
    public static OptionError? BindChecked(string section, ConfigSources sources, Action bind)
    {
        ArgumentNullException.ThrowIfNull(bind);
        try
        {
            bind();
            return null;
        }
        catch (InvalidOperationException)
        {
            string where = section.Length == 0 ? "the configuration" : $"the {section} section";
            return new OptionError(section.Length == 0 ? "configuration" : section, $"a value in {where} cannot be read", "Compare it with `driftline check --list`")
            {
                Source = sources.FilePath is null ? null : $"config {sources.FilePath}",
            };
        }
    }

    /// <summary>Adds to each error the file or variable that set its option, where that option is a key of <paramref name="configuration"/>.</summary>
    public static IReadOnlyList<OptionError> WithSources(IEnumerable<OptionError> errors, IConfiguration configuration, ConfigSources sources) =>
        errors.Select(e => e.Source is null && configuration[e.Option] is not null ? e with { Source = sources.Of(e.Option) } : e).ToList();

    /// <summary>
    /// The configuration tree from the file and environment, without binding, and where each
    /// key came from. Only variables that name a known section (<c>DRIFTLINE_Model__…</c>) are
    /// read, so an unrelated one such as <c>DRIFTLINE_HOME</c> is left alone; two spellings of
    /// one override with different values (<c>DRIFTLINE_Model__HashBits</c> and
    /// <c>driftline_Model:HashBits</c>) are a conflict, reported rather than picked between.
    /// </summary>
    public static IConfigurationRoot? Build(string? path, IDictionary<string, string?>? environment, out ConfigSources sources, out IReadOnlyList<OptionError> errors)
    {
        errors = [];
        sources = ConfigSources.None;
        var builder = new ConfigurationBuilder();
        if (path is not null)
        {
            var full = Path.GetFullPath(path);
            if (Directory.Exists(full))
            {
                // A folder is not a missing file: say what it is.
                errors = [new OptionError("--config", $"'{path}' is a folder, not a file", "Give the path of a JSON configuration file inside it (see config/ for examples)")
                {
                    Source = $"config {path}",
                    Message = "it is a folder, not a file; give the path of a JSON configuration file (see config/ for examples)",
                }];
                return null;
            }
            if (!File.Exists(full))
            {
                errors = [new OptionError("--config", $"file '{path}' does not exist", "Give the path of a JSON configuration file (see config/ for examples)")
                {
                    Source = $"config {path}",
                    Message = "the file does not exist; give the path of a JSON configuration file (see config/ for examples)",
                }];
                return null;
            }
            builder.AddJsonFile(full, optional: false, reloadOnChange: false);
        }
        var (overrides, variables, found) = Overrides(environment);
        if (found.Count > 0)
        {
            errors = found;
            return null;
        }
        builder.AddInMemoryCollection(overrides);
        sources = new ConfigSources(path, variables);
        try
        {
            return builder.Build();
        }
        catch (Exception ex) when (ex is InvalidDataException or FormatException)
        {
            // The JSON reader's own message gives the line and position.
            string detail = ex.InnerException?.Message ?? ex.Message;
            errors = [new OptionError("--config", $"file '{path}' is not valid JSON ({detail})", "Fix the JSON syntax") { Source = $"config {path}", Message = $"not valid JSON: {detail}" }];
            return null;
        }
    }

    /// <summary>The process environment as a dictionary.</summary>
    public static IDictionary<string, string?> ProcessEnvironment() =>
        Environment.GetEnvironmentVariables().Cast<System.Collections.DictionaryEntry>()
            .ToDictionary(e => (string)e.Key, e => (string?)e.Value);

    private static (Dictionary<string, string?> Overrides, Dictionary<string, string> Variables, List<OptionError> Errors) Overrides(IDictionary<string, string?>? environment)
    {
        var overrides = new Dictionary<string, string?>(StringComparer.OrdinalIgnoreCase);
        var variables = new Dictionary<string, string>(StringComparer.OrdinalIgnoreCase);
        var errors = new List<OptionError>();
        var sections = OptionSchema.Sections.ToList();
        foreach (var (name, value) in (environment ?? new Dictionary<string, string?>()).OrderBy(kv => kv.Key, StringComparer.Ordinal))
        {
            if (!name.StartsWith(EnvironmentPrefix, StringComparison.OrdinalIgnoreCase))
            {
                continue;
            }
            string key = name[EnvironmentPrefix.Length..].Replace("__", ":", StringComparison.Ordinal);
            string section = key.Split(':')[0];
            if (!sections.Contains(section, StringComparer.OrdinalIgnoreCase))
            {
                // Not ours (DRIFTLINE_HOME), unless it is plainly a misspelt section path.
                if (key.Contains(':', StringComparison.Ordinal) && ClosestName.Find(section, sections) is { } guess)
                {
                    errors.Add(new OptionError(key, "unknown section", "") { Source = $"environment {name}", Message = $"unknown section {section}; did you mean {guess}?" });
                }
                continue;
            }
            if (variables.TryGetValue(key, out var first))
            {
                if (!string.Equals(overrides[key], value, StringComparison.Ordinal))
                {
                    errors.Add(new OptionError(key, "set twice", "")
                    {
                        Source = "",
                        Message = $"environment variables {first} and {name} both set {key}, to '{overrides[key]}' and '{value}'; unset one",
                    });
                }
                continue;
            }
            overrides[key] = value;
            variables[key] = name;
        }
        return (overrides, variables, errors);
    }
}
