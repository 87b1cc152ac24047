namespace Driftline.Configuration;

/// <summary>
/// Where each configuration key came from, so a mistake names what the user wrote: the file,
/// or the environment variable (which wins over the file).
/// </summary>
/// <param name="FilePath">The configuration file as given on the command line, or null.</param>
/// <param name="Variables">Environment variable behind each key it sets (keys ignore case).</param>
internal sealed record ConfigSources(string? FilePath, IReadOnlyDictionary<string, string> Variables)
{
    /// <summary>No file and no environment: the keys' origin is unknown.</summary>
    public static readonly ConfigSources None = new(null, new Dictionary<string, string>(StringComparer.OrdinalIgnoreCase));

    /// <summary>
    /// <c>environment NAME</c> when a variable sets <paramref name="key"/> or a key below it,
    /// else <c>config FILE</c> when a file was given, else null.
    /// </summary>
    public string? Of(string key)
    {
        if (Variables.TryGetValue(key, out var variable))
        {
            return $"environment {variable}";
        }
        if (FilePath is not null)
        {
            return $"config {FilePath}";
        }
        var below = Variables.FirstOrDefault(v => v.Key.StartsWith(key + ":", StringComparison.OrdinalIgnoreCase));
        return below.Value is null ? null : $"environment {below.Value}";
    }
}
