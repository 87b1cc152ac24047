using System.Buffers.Binary;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace Driftline.Core.Scoring;

/// <summary>
/// The bytes of one waiting prediction in the pending store's arena, every field exact:
/// <list type="number">
/// <item>the id key (<see cref="IdKey"/>);</item>
/// <item>a flags byte (graded, has a served probability, a segment, a time, a model other than
/// the first, class probabilities);</item>
/// <item>the model index (varint) and the event time (8 bytes), each only when flagged;</item>
/// <item>binary: the probability and the prior's (8 bytes each); multiclass: the class count
/// (varint), then that many of each;</item>
/// <item>the served probability (8 bytes) and the segment (varint length, UTF-16 code units),
/// each only when flagged;</item>
/// <item>the features: their count (varint); then, for any, the bit width of the largest slot
/// (1 byte) and a bit stream with, for each feature, its slot in that width, a bit set when the
/// value is exactly ±1 and, for those, the sign; then the other values, 8 bytes each, in order.</item>
/// </list>
/// A hashed categorical (value ±1) with 2^18 slots thus costs 20 bits instead of 12 bytes;
/// every other value keeps its 64 bits, so what is read back is what was written.
/// </summary>
internal static class PendingRecord
{
    private const byte Labelled = 1;
    private const byte HasServed = 2;
    private const byte HasSegment = 4;
    private const byte HasTime = 8;
    private const byte HasModel = 16;
    private const byte HasClasses = 32;

    private static readonly long PlusOne = BitConverter.DoubleToInt64Bits(1.0);
    private static readonly long MinusOne = BitConverter.DoubleToInt64Bits(-1.0);
    private static readonly long DefaultNaN = BitConverter.DoubleToInt64Bits(double.NaN);

    /// <summary>Bytes the record takes (its key <paramref name="keyLength"/> bytes).</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static int Size(int keyLength, long timeTicks, int model, ReadOnlySpan<double> p, ReadOnlySpan<double> served, string? segment, ReadOnlySpan<int> slots, ReadOnlySpan<double> values)
    {
        int size = keyLength + 1;
        size += model != 0 ? Varint.Size((uint)model) : 0;
        size += timeTicks != Events.ParsedRecord.NoTime ? 8 : 0;
        size += p.Length == 1 ? 16 : Varint.Size((uint)p.Length) + (16 * p.Length);
        size += HasServedValues(served) ? (p.Length == 1 ? 8 : Varint.Size((uint)served.Length) + (8 * served.Length)) : 0;
        size += segment is null ? 0 : Varint.Size((uint)segment.Length) + (2 * segment.Length);
        size += Varint.Size((uint)slots.Length);
        if (slots.Length > 0)
        {
            int width = Width(slots);
            long bits = 0;
            int others = 0;
            foreach (double v in values)
            {
                bool unit = IsUnit(v);
                bits += width + (unit ? 2 : 1);
                others += unit ? 0 : 1;
            }
            size += 1 + (int)((bits + 7) / 8) + (8 * others);
        }
        return size;
    }

    /// <summary>Writes the record into <paramref name="into"/>, exactly <see cref="Size"/> bytes.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void Write(Span<byte> into, ReadOnlySpan<byte> key, long timeTicks, int model, ReadOnlySpan<double> p, ReadOnlySpan<double> priorP, ReadOnlySpan<double> served, string? segment, ReadOnlySpan<int> slots, ReadOnlySpan<double> values)
    {
        key.CopyTo(into);
        int pos = key.Length;
        int flagsAt = pos++;
        byte flags = 0;
        if (model != 0)
        {
            flags |= HasModel;
            pos = Varint.Write(into, pos, (uint)model);
        }
        if (timeTicks != Events.ParsedRecord.NoTime)
        {
            flags |= HasTime;
            BinaryPrimitives.WriteInt64LittleEndian(into[pos..], timeTicks);
            pos += 8;
        }
        if (p.Length != 1)
        {
            flags |= HasClasses;
            pos = Varint.Write(into, pos, (uint)p.Length);
        }
        pos = WriteDoubles(into, pos, p);
        pos = WriteDoubles(into, pos, priorP);
        if (HasServedValues(served))
        {
            flags |= HasServed;
            if (p.Length != 1)
            {
                pos = Varint.Write(into, pos, (uint)served.Length);
                pos = WriteDoubles(into, pos, served);
            }
            else
            {
                pos = WriteDoubles(into, pos, served[..1]);
            }
        }
        if (segment is not null)
        {
            flags |= HasSegment;
            pos = Varint.Write(into, pos, (uint)segment.Length);
            MemoryMarshal.AsBytes(segment.AsSpan()).CopyTo(into[pos..]);
            pos += 2 * segment.Length;
        }
        into[flagsAt] = flags;
        pos = Varint.Write(into, pos, (uint)slots.Length);
        if (slots.Length == 0)
        {
            return;
        }
        int width = Width(slots);
        into[pos++] = (byte)width;
        ulong acc = 0;
        int held = 0;
        for (int i = 0; i < slots.Length; i++)
        {
            long bits = BitConverter.DoubleToInt64Bits(values[i]);
            bool unit = bits == PlusOne || bits == MinusOne;
            // Slot, then the unit bit, then the sign: at most 34 bits on top of 7 held.
            acc |= (ulong)(uint)slots[i] << held;
            held += width;
            acc |= (unit ? 1UL : 0UL) << held++;
            if (unit)
            {
                acc |= (bits == MinusOne ? 1UL : 0UL) << held++;
            }
            while (held >= 8)
            {
                into[pos++] = (byte)acc;
                acc >>= 8;
                held -= 8;
            }
        }
        if (held > 0)
        {
            into[pos++] = (byte)acc;
        }
        for (int i = 0; i < values.Length; i++)
        {
            if (!IsUnit(values[i]))
            {
                BinaryPrimitives.WriteDoubleLittleEndian(into[pos..], values[i]);
                pos += 8;
            }
        }
    }

    /// <summary>True when the prediction has been graded.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static bool IsLabelled(ReadOnlySpan<byte> record) => (record[IdKey.Length(record)] & Labelled) != 0;

    /// <summary>Marks the prediction graded.</summary>
    public static void MarkLabelled(Span<byte> record) => record[IdKey.Length(record)] |= Labelled;

    /// <summary>The event time, or no time.</summary>
    public static long TimeOf(ReadOnlySpan<byte> record)
    {
        int pos = IdKey.Length(record);
        byte flags = record[pos++];
        if ((flags & HasTime) == 0)
        {
            return Events.ParsedRecord.NoTime;
        }
        if ((flags & HasModel) != 0)
        {
            Varint.Read(record, pos, out int size);
            pos += size;
        }
        return BinaryPrimitives.ReadInt64LittleEndian(record[pos..]);
    }

    /// <summary>Bytes the record at the start of <paramref name="record"/> takes.</summary>
    public static int Length(ReadOnlySpan<byte> record) => Read(record, null, withId: false);

    /// <summary>
    /// Decodes the record into <paramref name="into"/> (its id too when <paramref name="withId"/>);
    /// with no target, only measures it. Returns its length in bytes.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static int Read(ReadOnlySpan<byte> record, PendingPrediction? into, bool withId)
    {
        int pos = IdKey.Length(record);
        if (into is not null)
        {
            into.Id = withId ? IdKey.Decode(record[..pos]) : null;
        }
        byte flags = record[pos++];
        int model = 0;
        if ((flags & HasModel) != 0)
        {
            model = (int)Varint.Read(record, pos, out int size);
            pos += size;
        }
        long time = Events.ParsedRecord.NoTime;
        if ((flags & HasTime) != 0)
        {
            time = BinaryPrimitives.ReadInt64LittleEndian(record[pos..]);
            pos += 8;
        }
        int classes = 0;
        bool vector = (flags & HasClasses) != 0;
        if (vector)
        {
            classes = (int)Varint.Read(record, pos, out int size);
            pos += size;
        }
        if (into is not null)
        {
            into.Model = model;
            into.TimeTicks = time;
            into.Labelled = (flags & Labelled) != 0;
            into.ClassBuffers(classes, out var classP, out var classPriorP);
            if (!vector)
            {
                into.P = BinaryPrimitives.ReadDoubleLittleEndian(record[pos..]);
                into.PriorP = BinaryPrimitives.ReadDoubleLittleEndian(record[(pos + 8)..]);
            }
            else
            {
                ReadDoubles(record, pos, classP);
                ReadDoubles(record, pos + (8 * classes), classPriorP);
                into.P = double.NaN;
                into.PriorP = double.NaN;
            }
        }
        pos += vector ? 16 * classes : 16;
        double served = double.NaN;
        int servedClasses = 0;
        if ((flags & HasServed) != 0 && !vector)
        {
            served = BinaryPrimitives.ReadDoubleLittleEndian(record[pos..]);
            pos += 8;
        }
        else if ((flags & HasServed) != 0)
        {
            servedClasses = (int)Varint.Read(record, pos, out int size);
            pos += size;
            if (into is not null)
            {
                ReadDoubles(record, pos, into.ServedBuffer(servedClasses));
            }
            pos += 8 * servedClasses;
        }
        into?.ServedBuffer(servedClasses);
        string? segment = null;
        if ((flags & HasSegment) != 0)
        {
            int chars = (int)Varint.Read(record, pos, out int size);
            pos += size;
            segment = into is null ? null : new string(MemoryMarshal.Cast<byte, char>(record.Slice(pos, 2 * chars)));
            pos += 2 * chars;
        }
        int count = (int)Varint.Read(record, pos, out int countSize);
        pos += countSize;
        Span<int> slots = default;
        Span<double> values = default;
        if (into is not null)
        {
            into.Served = served;
            into.Segment = segment;
            into.FeatureBuffers(count, out slots, out values);
        }
        if (count == 0)
        {
            return pos;
        }
        int width = record[pos++];
        ulong slotMask = (1UL << width) - 1;
        ulong acc = 0;
        int held = 0;
        int others = 0;
        for (int i = 0; i < count; i++)
        {
            // Bytes are taken only as bits are owed, so the stream ends where the values begin.
            while (held < width)
            {
                acc |= (ulong)record[pos++] << held;
                held += 8;
            }
            int slot = (int)(uint)(acc & slotMask);
            acc >>= width;
            held -= width;
            if (held == 0)
            {
                acc = record[pos++];
                held = 8;
            }
            bool unit = (acc & 1) != 0;
            acc >>= 1;
            held--;
            double value = double.NaN;
            if (unit)
            {
                if (held == 0)
                {
                    acc = record[pos++];
                    held = 8;
                }
                value = (acc & 1) != 0 ? -1.0 : 1.0;
                acc >>= 1;
                held--;
            }
            else
            {
                others++;
            }
            if (into is not null)
            {
                slots[i] = slot;
                values[i] = value;
            }
        }
        if (into is not null)
        {
            for (int i = 0; i < count; i++)
            {
                if (double.IsNaN(values[i]))
                {
                    values[i] = BinaryPrimitives.ReadDoubleLittleEndian(record[pos..]);
                    pos += 8;
                }
            }
            return pos;
        }
        return pos + (8 * others);
    }

    // One served value that is the default NaN means none (a binary prediction with
    // recalibration off), as before the served values were spans.
    private static bool HasServedValues(ReadOnlySpan<double> served) =>
        served.Length > 1 || (served.Length == 1 && BitConverter.DoubleToInt64Bits(served[0]) != DefaultNaN);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static bool IsUnit(double v)
    {
        long bits = BitConverter.DoubleToInt64Bits(v);
        return bits == PlusOne || bits == MinusOne;
    }

    private static int Width(ReadOnlySpan<int> slots)
    {
        uint any = 0;
        foreach (int s in slots)
        {
            any |= (uint)s;
        }
        return 32 - System.Numerics.BitOperations.LeadingZeroCount(any);
    }

    private static int WriteDoubles(Span<byte> into, int pos, ReadOnlySpan<double> values)
    {
        foreach (double v in values)
        {
            BinaryPrimitives.WriteDoubleLittleEndian(into[pos..], v);
            pos += 8;
        }
        return pos;
    }

    private static void ReadDoubles(ReadOnlySpan<byte> from, int pos, Span<double> into)
    {
        for (int i = 0; i < into.Length; i++)
        {
            into[i] = BinaryPrimitives.ReadDoubleLittleEndian(from[(pos + (8 * i))..]);
        }
    }
}
