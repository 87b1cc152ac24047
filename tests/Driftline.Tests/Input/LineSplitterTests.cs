using System.Text;
using Driftline.Pipeline;
using Xunit;

namespace Driftline.Tests.Input;

public sealed class LineSplitterTests
{
    /// <summary>A stream of <paramref name="length"/> bytes of 'x' made as it is read, then <paramref name="tail"/>.</summary>
    private sealed class Generated(long length, byte[] tail) : Stream
    {
        private long _position;

        public override bool CanRead => true;
        public override bool CanSeek => false;
        public override bool CanWrite => false;
        public override long Length => length + tail.Length;
        public override long Position { get => _position; set => throw new NotSupportedException(); }
        public override void Flush() { }
        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();
        public override void SetLength(long value) => throw new NotSupportedException();
        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();

        public override int Read(byte[] buffer, int offset, int count)
        {
            int n = 0;
            while (n < count && _position < length + tail.Length)
            {
                buffer[offset + n++] = _position < length ? (byte)'x' : tail[_position - length];
                _position++;
            }
            return n;
        }
    }

    private static List<(LineKind Kind, string Text, long Bytes)> Split(Stream input, int max, out int largestBuffer)
    {
        var splitter = new LineSplitter(max);
        var found = new List<(LineKind, string, long)>();
        largestBuffer = 0;
        while (true)
        {
            splitter.Advance(input.Read(splitter.Space().Span));
            largestBuffer = Math.Max(largestBuffer, splitter.BufferBytes);
            LineKind kind;
            while ((kind = splitter.Next(out var line, out long bytes)) is LineKind.Line or LineKind.Oversized)
            {
                found.Add((kind, Encoding.UTF8.GetString(line), bytes));
            }
            if (kind == LineKind.End)
            {
                return found;
            }
        }
    }

    private static List<(LineKind Kind, string Text, long Bytes)> Split(string text, int max = 1024) =>
        Split(new MemoryStream(Encoding.UTF8.GetBytes(text)), max, out _);

    [Fact]
    public void Next_LineOverTheLimit_IsSkippedToItsEndWithItsLengthAndBufferStaysBounded()
    {
        // 50 MB with no line break, then two good lines: the reader never holds the 50 MB.
        var input = new Generated(50_000_000, "\r\n{\"id\":\"a\"}\nlast"u8.ToArray());
        var lines = Split(input, 4096, out int largest);
        Assert.Equal(3, lines.Count);
        Assert.Equal((LineKind.Oversized, 50_000_000L), (lines[0].Kind, lines[0].Bytes));
        Assert.Equal(LineSplitter.PrefixBytes, lines[0].Text.Length);
        Assert.Equal((LineKind.Line, "{\"id\":\"a\"}"), (lines[1].Kind, lines[1].Text));
        Assert.Equal((LineKind.Line, "last"), (lines[2].Kind, lines[2].Text));
        Assert.True(largest <= 1 << 20, $"buffer grew to {largest} bytes");
    }

    [Fact]
    public void Next_LimitAboveTheFirstBuffer_GrowsToTheLimitOnly()
    {
        var input = new Generated(20_000_000, "\nok"u8.ToArray());
        var lines = Split(input, 3 << 20, out int largest);
        Assert.Equal((LineKind.Oversized, 20_000_000L), (lines[0].Kind, lines[0].Bytes));
        Assert.Equal("ok", lines[1].Text);
        Assert.InRange(largest, 3 << 20, (3 << 20) + 2);
    }

    [Theory]
    [InlineData(1024, false)]
    [InlineData(1025, true)]
    public void Next_LineAtTheLimit_IsKeptAndOneByteMoreIsNot(int length, bool over)
    {
        var expected = over ? LineKind.Oversized : LineKind.Line;
        var lines = Split(new string('y', length) + "\r\nz\n");
        Assert.Equal(expected, lines[0].Kind);
        Assert.Equal(expected == LineKind.Oversized ? length : 0, lines[0].Bytes);
        Assert.Equal("z", lines[1].Text);
    }

    [Fact]
    public void Next_OversizedLastLineWithoutBreak_IsReported()
    {
        var lines = Split(new Generated(5_000_000, []), 2048, out _);
        var only = Assert.Single(lines);
        Assert.Equal((LineKind.Oversized, 5_000_000L), (only.Kind, only.Bytes));
    }

    [Fact]
    public void Next_ByteOrderMarkAtStart_IsSkippedButNotElsewhere()
    {
        var lines = Split("\uFEFF{\"id\":\"a\"}\n\uFEFFb\n");
        Assert.Equal("{\"id\":\"a\"}", lines[0].Text);
        Assert.Equal("\uFEFFb", lines[1].Text);
    }

    [Fact]
    public void Next_ByteOrderMarkReadOneByteAtATime_IsStillSkipped()
    {
        var splitter = new LineSplitter(1024);
        var bytes = Encoding.UTF8.GetBytes("\uFEFFab\n");
        var found = new List<string>();
        for (int i = 0; i <= bytes.Length; i++)
        {
            var space = splitter.Space();
            int n = i < bytes.Length ? 1 : 0;
            if (n == 1)
            {
                space.Span[0] = bytes[i];
            }
            splitter.Advance(n);
            while (splitter.Next(out var line, out _) == LineKind.Line)
            {
                found.Add(Encoding.UTF8.GetString(line));
            }
        }
        Assert.Equal(["ab"], found);
    }

    [Fact]
    public void Next_BlankAndCrLfLines_KeepTheirPlaces()
    {
        var lines = Split("a\r\n\n\r\nb");
        Assert.Equal(["a", "", "", "b"], lines.Select(l => l.Text));
    }

    /// <summary>Hands out its bytes in pieces of random size, as a pipe or a socket does.</summary>
    private sealed class Chunked(byte[] data, Random random) : MemoryStream(data)
    {
        public override int Read(byte[] buffer, int offset, int count) => base.Read(buffer, offset, Math.Min(count, random.Next(1, 5_000)));
    }

    [Fact]
    public void Next_AnyLinesInAnyReadSizes_SameAsSplittingTheWholeText()
    {
        // The reference is the plain split of the whole text at LF, CR removed, lines over the limit reported by length.
        var random = new Random(12);
        const int max = 3_000;
        for (int round = 0; round < 200; round++)
        {
            var lines = Enumerable.Range(0, random.Next(0, 40)).Select(_ => random.Next(10) switch
            {
                0 => "",
                1 => new string('a', random.Next(max - 2, max + 3)),
                2 => new string('b', random.Next(max, 20_000)) + "\r",
                3 => "\r",
                _ => new string('c', random.Next(0, 200)),
            }).ToList();
            string text = string.Join("\n", lines) + (random.Next(2) == 0 ? "\n" : "");
            var expected = (text.EndsWith('\n') ? text[..^1] : text).Split('\n').Where((_, i) => text.Length > 0)
                .Select(l => l.EndsWith('\r') ? l[..^1] : l)
                .Select(l => l.Length > max ? (LineKind.Oversized, l[..Math.Min(l.Length, LineSplitter.PrefixBytes)], (long)l.Length) : (LineKind.Line, l, 0L))
                .ToList();
            var actual = Split(new Chunked(Encoding.UTF8.GetBytes(text), random), max, out int largest);
            Assert.Equal(expected, actual);
            Assert.True(largest <= 1 << 20);
        }
    }
}
