using System.Buffers;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Text;
using System.Text.Unicode;

namespace Driftline.Core.Scoring;

/// <summary>
/// An event id as the bytes the pending store keeps and compares: a varint of the byte
/// length shifted left by one, its low bit set when the bytes are the id's UTF-16 code units
/// rather than UTF-8, then the bytes. UTF-8 holds an ASCII id in one byte a character (a
/// string costs two, plus a 24-byte header); an id that is not valid UTF-16 (a lone
/// surrogate) keeps its code units as they are, so two different ids never share a key.
/// </summary>
internal static class IdKey
{
    /// <summary>Writes the key of <paramref name="id"/> into <paramref name="buffer"/> (grown when short) and returns its length.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static int Encode(string id, ref byte[] buffer)
    {
        int most = 5 + (3 * id.Length);
        if (buffer.Length < most)
        {
            buffer = new byte[Math.Max(most, buffer.Length * 2)];
        }
        // The header is written after the bytes are known; a 5-byte varint covers any length.
        int header = Varint.Size((uint)(id.Length * 3) << 1);
        var body = buffer.AsSpan(header);
        int length;
        bool utf16 = false;
        if (Utf8.FromUtf16(id, body, out _, out int written, replaceInvalidSequences: false) == OperationStatus.Done)
        {
            length = written;
        }
        else
        {
            MemoryMarshal.AsBytes(id.AsSpan()).CopyTo(body);
            length = id.Length * 2;
            utf16 = true;
        }
        uint tag = ((uint)length << 1) | (utf16 ? 1u : 0u);
        int actual = Varint.Size(tag);
        if (actual != header)
        {
            buffer.AsSpan(header, length).CopyTo(buffer.AsSpan(actual));
        }
        Varint.Write(buffer, 0, tag);
        return actual + length;
    }

    /// <summary>Length of the key at the start of <paramref name="record"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static int Length(ReadOnlySpan<byte> record)
    {
        uint tag = Varint.Read(record, 0, out int header);
        return header + (int)(tag >> 1);
    }

    /// <summary>The id a key spells.</summary>
    public static string Decode(ReadOnlySpan<byte> key)
    {
        uint tag = Varint.Read(key, 0, out int header);
        var body = key.Slice(header, (int)(tag >> 1));
        return (tag & 1) == 0 ? Encoding.UTF8.GetString(body) : new string(MemoryMarshal.Cast<byte, char>(body));
    }

    /// <summary>The key's hash for the store's index (seeded per process, like string hashes).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static int Hash(ReadOnlySpan<byte> key)
    {
        var h = default(HashCode);
        h.AddBytes(key);
        return h.ToHashCode();
    }
}
