using System.Text;
using Driftline.Core.Events;
using Driftline.Core.Features;
using Xunit;

namespace Driftline.Core.Tests.Events;

public sealed class EventParserTests
{
    private readonly EventParser _parser = new();
    private readonly ParsedRecord _record = new();

    private bool Parse(string json, out string? error) => _parser.TryParse(Encoding.UTF8.GetBytes(json), _record, out error);

    [Fact]
    public void TryParse_FullEvent_ReadsEveryField()
    {
        Assert.True(Parse("""{"id":"o-1","time":"2026-03-04T18:22:05.120Z","key":"city-north","features":{"zone":"riverside","distance_km":3.4,"items":5,"raining":true,"tags":["dessert","large-order"],"note":null},"label":1}""", out var error), error);
        Assert.Equal(RecordKind.Event, _record.Kind);
        Assert.Equal("o-1", _record.Id);
        Assert.Equal("city-north", _record.Key);
        Assert.Equal(new DateTimeOffset(2026, 3, 4, 18, 22, 5, 120, TimeSpan.Zero).UtcTicks, _record.TimeTicks);
        Assert.Equal(1, _record.Label);
        // zone, distance_km, items, raining, two tags; null skipped.
        Assert.Equal(6, _record.FeatureCount);
        var f = _record.Features;
        Assert.Equal(RawFeatureKind.Categorical, f[0].Kind);
        Assert.Equal(FeatureHash.Value(FeatureHash.Name("zone"u8), "riverside"u8), f[0].Hash);
        Assert.Equal((RawFeatureKind.Numeric, 3.4), (f[1].Kind, f[1].Value));
        Assert.Equal((RawFeatureKind.Boolean, 1.0), (f[3].Kind, f[3].Value));
        Assert.Equal(f[4].NameHash, f[5].NameHash);
        Assert.NotEqual(f[4].Hash, f[5].Hash);
    }

    [Fact]
    public void TryParse_EscapedText_HashesLikeTheUnescapedBytes()
    {
        Assert.True(Parse("""{"id":"a","features":{"zo\u006ee":"river\u0073ide"}}""", out _));
        Assert.Equal(FeatureHash.Value(FeatureHash.Name("zone"u8), "riverside"u8), _record.Features[0].Hash);
    }

    [Theory]
    [InlineData("""{"id":"a","label":0}""", nameof(RecordKind.Label))]
    [InlineData("""{"id":"a","label":true}""", nameof(RecordKind.Label))]
    [InlineData("""{"id":"a","p":0.3}""", nameof(RecordKind.Probability))]
    [InlineData("""{"id":"a","p":0.3,"label":1}""", nameof(RecordKind.Probability))]
    [InlineData("""{"id":"a","features":{}}""", nameof(RecordKind.Event))]
    public void TryParse_Shapes_AreClassified(string json, string kind)
    {
        Assert.True(Parse(json, out var error), error);
        Assert.Equal(kind, _record.Kind.ToString());
    }

    [Theory]
    [InlineData("not json", "not valid JSON")]
    [InlineData("""{"id":"a","features":{"x":1""", "not valid JSON")]
    [InlineData("[1,2]", "not a JSON object")]
    [InlineData("""{"features":{"x":1}}""", "id must be a non-empty string")]
    [InlineData("""{"id":"","features":{"x":1}}""", "id must be a non-empty string")]
    [InlineData("""{"id":7,"features":{"x":1}}""", "id must be a non-empty string")]
    [InlineData("""{"id":"a","features":[1]}""", "features must be a JSON object")]
    [InlineData("""{"id":"a","features":"x"}""", "features must be a JSON object")]
    [InlineData("""{"id":"a","features":{"x":{"y":1}}}""", "feature 'x' must be")]
    [InlineData("""{"id":"a","features":{"tags":["a",2]}}""", "feature 'tags' is an array")]
    [InlineData("""{"id":"a","features":{"x":1e999}}""", "feature 'x' is not a finite number")]
    [InlineData("""{"id":"a","features":{"x":1},"label":2}""", "label must be 0, 1, true or false")]
    [InlineData("""{"id":"a","features":{"x":1},"label":"1"}""", "label must be 0, 1, true or false")]
    [InlineData("""{"id":"a","p":1.5}""", "p must be a finite number between 0 and 1")]
    [InlineData("""{"id":"a","time":"yesterday","label":1}""", "time must be an ISO 8601 timestamp")]
    [InlineData("""{"id":"a"}""", "neither features")]
    [InlineData("""{"id":"a","label":1} {"id":"b"}""", "not valid JSON")]
    public void TryParse_BadRecord_IsRejectedWithReason(string json, string reason)
    {
        Assert.False(Parse(json, out var error));
        Assert.Contains(reason, error, StringComparison.Ordinal);
    }

    [Fact]
    public void TryParse_InvalidUtf8_IsRejected()
    {
        byte[] bytes = [.. "{\"id\":\"a\",\"features\":{\"z\":\""u8, 0xFF, 0xFE, .. "\"}}"u8];
        Assert.False(_parser.TryParse(bytes, _record, out var error));
        Assert.StartsWith("not valid JSON", error, StringComparison.Ordinal);
    }

    [Fact]
    public void TryParse_UnknownTopLevelField_IsIgnored()
    {
        Assert.True(Parse("""{"id":"a","source":{"deep":[1,2,{"x":3}]},"features":{"x":1}}""", out var error), error);
        Assert.Equal(1, _record.FeatureCount);
    }

    [Fact]
    public void TryParse_SameKeyTwice_ReturnsTheSameString()
    {
        Assert.True(Parse("""{"id":"a","key":"north","features":{}}""", out _));
        string first = _record.Key!;
        Assert.True(Parse("""{"id":"b","key":"north","features":{}}""", out _));
        Assert.Same(first, _record.Key);
    }

    // RFC 8259 section 8.2: an escape \uD800-\uDFFF that is not half of a pair names no
    // Unicode character; System.Text.Json throws InvalidOperationException when it unescapes one.
    [Theory]
    [InlineData("""{"id":"a\ud800","features":{"x":1}}""")]
    [InlineData("""{"id":"a","key":"k\udc00","features":{"x":1}}""")]
    [InlineData("""{"id":"a","time":"2026-03-04T18:22:05Z\ud800","features":{"x":1}}""")]
    [InlineData("""{"id":"a","features":{"zo\ud800ne":"north"}}""")]
    [InlineData("""{"id":"a","features":{"zo\ud800ne":1}}""")]
    [InlineData("""{"id":"a","features":{"zone":"no\udfffrth"}}""")]
    [InlineData("""{"id":"a","features":{"tags":["ok","b\ud800"]}}""")]
    [InlineData("""{"i\ud800d":"a","features":{"x":1}}""")]
    [InlineData("""{"id":"a","lab\udbffel":1,"features":{"x":1}}""")]
    [InlineData("""{"id":"a","features":{"zone":"\ud800\ud800"}}""")]
    public void TryParse_LoneSurrogateEscape_IsRejectedWithReason(string json)
    {
        Assert.False(Parse(json, out var error));
        Assert.Contains("surrogate", error, StringComparison.Ordinal);
    }

    [Fact]
    public void TryParse_PairedSurrogateEscape_IsAccepted()
    {
        // U+1F355 as the pair \uD83C\uDF55 (RFC 8259 section 7) equals its UTF-8 bytes.
        Assert.True(Parse("""{"id":"a\ud83c\udf55","features":{"dish":"\ud83c\udf55"}}""", out var error), error);
        Assert.Equal("a\U0001F355", _record.Id);
        Assert.Equal(FeatureHash.Value(FeatureHash.Name("dish"u8), Encoding.UTF8.GetBytes("\U0001F355")), _record.Features[0].Hash);
    }

    [Theory]
    [InlineData("""{"id":"aaaaaaaaaaaaaaaaa","features":{}}""", "id is 17 bytes, more than Input:MaxTextBytes (16)")]
    [InlineData("""{"id":"a","key":"kkkkkkkkkkkkkkkkk","features":{}}""", "key is 17 bytes")]
    [InlineData("""{"id":"a","features":{"nnnnnnnnnnnnnnnnn":1}}""", "feature name is 17 bytes")]
    [InlineData("""{"id":"a","features":{"zone":"vvvvvvvvvvvvvvvvv"}}""", "the value of feature 'zone' is 17 bytes")]
    [InlineData("""{"id":"a","features":{"tags":["ok","vvvvvvvvvvvvvvvvv"]}}""", "the value of feature 'tags' is 17 bytes")]
    // Escapes are resolved before the count: six bytes of \u00e9 are two of UTF-8.
    [InlineData("""{"id":"a","features":{"zone":"\u00e9\u00e9\u00e9\u00e9\u00e9\u00e9\u00e9\u00e9\u00e9"}}""", "is 18 bytes")]
    public void TryParse_TextOverMaxTextBytes_IsRejectedWithItsLength(string json, string reason)
    {
        _parser.MaxTextBytes = 16;
        Assert.False(Parse(json, out var error));
        Assert.Contains(reason, error, StringComparison.Ordinal);
    }

    [Fact]
    public void TryParse_TextAtMaxTextBytes_IsAccepted()
    {
        _parser.MaxTextBytes = 16;
        Assert.True(Parse("""{"id":"aaaaaaaaaaaaaaaa","key":"kkkkkkkkkkkkkkkk","features":{"nnnnnnnnnnnnnnnn":"vvvvvvvvvvvvvvvv"}}""", out var error), error);
    }

    // Exact decimal values (RFC 8259 section 6 grammar): only a number equal to 0 or 1 is a label.
    [Theory]
    [InlineData("0", 0)]
    [InlineData("-0", 0)]
    [InlineData("0.000e7", 0)]
    [InlineData("1", 1)]
    [InlineData("1.0", 1)]
    [InlineData("10e-1", 1)]
    [InlineData("0.01E+2", 1)]
    [InlineData("1e-400", -1)]
    [InlineData("1.00000000000000000001", -1)]
    [InlineData("0.99999999999999999999", -1)]
    [InlineData("1e1", -1)]
    [InlineData("11", -1)]
    [InlineData("-1", -1)]
    [InlineData("2", -1)]
    [InlineData("1e99999999999999999999", -1)]
    public void TryParse_NumericLabel_IsTakenOnlyWhenExactlyZeroOrOne(string number, int expected)
    {
        bool parsed = Parse($$"""{"id":"a","label":{{number}}}""", out var error);
        Assert.Equal(expected >= 0, parsed);
        if (parsed)
        {
            Assert.Equal(expected, _record.Label);
        }
        else
        {
            Assert.Contains("label must be", error, StringComparison.Ordinal);
        }
    }
}
