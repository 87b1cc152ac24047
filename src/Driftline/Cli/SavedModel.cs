using Driftline.Core.Snapshots;

namespace Driftline.Cli;

/// <summary>Reads a saved model for <c>inspect</c> and <c>--warm-start</c>, checked before use.</summary>
internal static class SavedModel
{
    /// <summary>
    /// Reads and validates the model in <paramref name="path"/>, or returns null after writing
    /// one line that says what is wrong with it (the caller exits with <see cref="ExitCode.Input"/>).
    /// </summary>
    public static EngineSnapshot? Read(string path, CommandContext context)
    {
        if (Directory.Exists(path))
        {
            context.Error.WriteLine($"driftline: cannot load model '{path}': it is a folder; give the model file, such as {Path.Combine(path, ReplayCommand.ModelFile)}");
            return null;
        }
        try
        {
            using var stream = File.OpenRead(path);
            return SnapshotCodec.Read(stream);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException or InvalidDataException)
        {
            context.Error.WriteLine($"driftline: cannot load model '{path}': {ex.Message}");
            return null;
        }
    }
}
