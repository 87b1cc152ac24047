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
    /// True when the configuration file has a <c>Kafka</c> section with options but nothing sets
    /// <c>Kafka:Bootstrap</c> at all (an explicit empty one means "standard input on purpose").
    /// </summary>
    public bool KafkaSectionWithoutBootstrap { get; init; }

    /// <summary>
    /// Loads and validates. Returns the settings, or null with every mistake in
    /// <paramref name="errors"/>. <paramref name="overrides"/> are <c>Kafka</c> options given on
    /// the command line (null values were not given).
    /// </summary>
    public static RunSettings? Load(string? configPath, IDictionary<string, string?>? environment, IReadOnlyDictionary<string, string?> overrides, out IReadOnlyList<OptionError> errors)
    {
        var root = ConfigLoader.Build(configPath, environment, out var sources, out errors);
        if (root is null)
        {
            return null;
        }
        // Unknown keys and unreadable values in any section first: binding would only fail on them.
        var structure = OptionSchema.Check(root, sources);
        if (structure.Count > 0)
        {
            errors = structure;
            return null;
        }
        var found = new List<OptionError>();
        var core = ConfigLoader.Bind(root, sources, out var coreErrors);
        found.AddRange(coreErrors);
        var kafka = new KafkaOptions();
        var worker = new WorkerOptions();
        // Each bound with its own type at the call, so the binder's source generator covers it.
        if (ConfigLoader.BindChecked("Kafka", sources, () => root.GetSection("Kafka").Bind(kafka, o => o.ErrorOnUnknownConfiguration = true)) is { } kafkaFailure)
        {
            found.Add(kafkaFailure);
        }
        if (ConfigLoader.BindChecked("Worker", sources, () => root.GetSection("Worker").Bind(worker, o => o.ErrorOnUnknownConfiguration = true)) is { } workerFailure)
        {
            found.Add(workerFailure);
        }
        new ConfigurationBuilder().AddInMemoryCollection(overrides.Where(kv => kv.Value is not null)).Build().Bind(kafka);
        found.AddRange(ConfigLoader.WithSources(kafka.Validate(), root, sources));
        found.AddRange(ConfigLoader.WithSources(worker.Validate(), root, sources));
        errors = found;
        return found.Count == 0 && core is not null
            ? new RunSettings(core, kafka, worker) { KafkaSectionWithoutBootstrap = KafkaInFileOnly(root, sources) }
            : null;
    }

    /// <summary>
    /// The file sets Kafka options but nothing sets <c>Kafka:Bootstrap</c>. Environment defaults
    /// (the Docker image sets <c>DRIFTLINE_Kafka__CheckpointDir</c>) do not count: they are there
    /// for when a broker is given, and the image also serves standard input.
    /// </summary>
    private static bool KafkaInFileOnly(IConfiguration root, ConfigSources sources) =>
        root.GetSection("Kafka:Bootstrap").Value is null
        && root.GetSection("Kafka").AsEnumerable().Any(kv => kv.Value is not null && !sources.Variables.ContainsKey(kv.Key));
}
