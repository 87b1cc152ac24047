using Driftline.Core.Options;
using Driftline.Kafka.Options;
using Microsoft.Extensions.Configuration;

namespace Driftline.Configuration;

/// <summary>
/// Everything <c>run</c> is configured with: the core's options, the <c>Kafka</c> section and
/// the <c>Worker</c> section, from defaults, the file, the environment and then the
/// command line, in that order of precedence (last wins).
/// </summary>
/// <param name="Core">The score/learn options.</param>
/// <param name="Kafka">Topics, group, checkpoints and client settings.</param>
/// <param name="Worker">Logs and the metrics endpoint.</param>
internal sealed record RunSettings(DriftlineOptions Core, KafkaOptions Kafka, WorkerOptions Worker)
{
    /// <summary>
    /// Loads and validates. Returns the settings, or null with every mistake in
    /// <paramref name="errors"/>. <paramref name="overrides"/> are <c>Kafka</c> options given on
    /// the command line (null values were not given).
    /// </summary>
    public static RunSettings? Load(string? configPath, IDictionary<string, string?>? environment, IReadOnlyDictionary<string, string?> overrides, out IReadOnlyList<OptionError> errors)
    {
        var root = ConfigLoader.Build(configPath, environment, out var fileError);
        if (root is null)
        {
            errors = [fileError!];
            return null;
        }
        var found = new List<OptionError>();
        var core = ConfigLoader.Bind(root, out var coreErrors);
        found.AddRange(coreErrors);
        var kafka = BindSection<KafkaOptions>(root, "Kafka", found);
        var worker = BindSection<WorkerOptions>(root, "Worker", found);
        new ConfigurationBuilder().AddInMemoryCollection(overrides.Where(kv => kv.Value is not null)).Build().Bind(kafka);
        found.AddRange(kafka.Validate());
        found.AddRange(worker.Validate());
        errors = found;
        return found.Count == 0 && core is not null ? new RunSettings(core, kafka, worker) : null;
    }

    private static T BindSection<T>(IConfiguration root, string section, List<OptionError> errors) where T : new()
    {
        var options = new T();
        try
        {
            root.GetSection(section).Bind(options, o => o.ErrorOnUnknownConfiguration = true);
        }
        catch (InvalidOperationException ex)
        {
            errors.Add(new OptionError(section, ex.InnerException is null ? ex.Message : $"{ex.Message} ({ex.InnerException.Message})", "Remove or correct it; `driftline run --help` and docker/README.md list the options"));
        }
        return options;
    }
}
