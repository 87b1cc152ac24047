namespace Driftline.Tests.Support;

/// <summary>A fresh folder under the system temp folder, deleted on dispose.</summary>
internal sealed class TempFolder : IDisposable
{
    public TempFolder() => Directory.CreateDirectory(Path);

    public string Path { get; } = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "driftline-tests-" + Guid.NewGuid().ToString("N"));

    public string File(string name) => System.IO.Path.Combine(Path, name);

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
            // A browser that is slow to exit may still hold a file; the temp folder is cleaned eventually.
        }
    }
}
