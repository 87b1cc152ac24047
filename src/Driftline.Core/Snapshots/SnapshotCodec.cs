using System.Text.Json;

namespace Driftline.Core.Snapshots;

/// <summary>
/// Reads and writes <see cref="EngineSnapshot"/> as JSON. Doubles are written in their
/// shortest round-trip form, so a snapshot restores bit for bit.
/// </summary>
internal static class SnapshotCodec
{

    /// <summary>Writes <paramref name="snapshot"/> to <paramref name="stream"/>.</summary>
    public static void Write(EngineSnapshot snapshot, Stream stream)
    {
        ArgumentNullException.ThrowIfNull(snapshot);
        snapshot.Format = EngineSnapshot.FormatName;
        snapshot.FormatVersion = EngineSnapshot.CurrentVersion;
        JsonSerializer.Serialize(stream, snapshot, SnapshotJsonContext.Default.EngineSnapshot);
    }

    /// <summary>
    /// Reads a snapshot and checks it (<see cref="SnapshotValidator"/>). Throws
    /// <see cref="InvalidDataException"/> with a plain reason when the content is not a
    /// Driftline snapshot, is of an unknown version, repeats a property, or is damaged.
    /// </summary>
    public static EngineSnapshot Read(Stream stream)
    {
        EngineSnapshot? snapshot;
        try
        {
            snapshot = JsonSerializer.Deserialize(stream, SnapshotJsonContext.Default.EngineSnapshot);
        }
        catch (JsonException ex)
        {
            throw new InvalidDataException("not a Driftline model snapshot: " + EnumNamesOnly.Describe(ex), ex);
        }
        if (snapshot is null || snapshot.Format != EngineSnapshot.FormatName)
        {
            throw new InvalidDataException($"not a Driftline model snapshot (format is not '{EngineSnapshot.FormatName}')");
        }
        if (snapshot.FormatVersion != EngineSnapshot.CurrentVersion)
        {
            throw new InvalidDataException($"snapshot format version {snapshot.FormatVersion} is not supported by this build (it reads version {EngineSnapshot.CurrentVersion})");
        }
        SnapshotValidator.Check(snapshot);
        return snapshot;
    }
}
