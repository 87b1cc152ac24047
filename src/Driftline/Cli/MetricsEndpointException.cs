namespace Driftline.Cli;

/// <summary>The configured metrics endpoint could not start; the message names the options and the fix.</summary>
internal sealed class MetricsEndpointException : Exception
{
    /// <summary>Creates the exception.</summary>
    public MetricsEndpointException(string message, Exception inner)
        : base(message, inner)
    {
    }
}
