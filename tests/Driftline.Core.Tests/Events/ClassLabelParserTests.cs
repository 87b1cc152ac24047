using System.Text;
using Driftline.Core.Events;
using Xunit;

namespace Driftline.Core.Tests.Events;

/// <summary>Labels of a multiclass model name a class by its text (issue 10).</summary>
public sealed class ClassLabelParserTests
{
    private readonly EventParser _parser = new() { Classes = ["on-time", "late", "failed", "3"] };
    private readonly ParsedRecord _record = new();

    private bool Parse(string json, out string? error) => _parser.TryParse(Encoding.UTF8.GetBytes(json), _record, out error);

    [Theory]
    [InlineData("""{"id":"a","features":{"x":1},"label":"on-time"}""", 0)]
    [InlineData("""{"id":"a","features":{"x":1},"label":"failed"}""", 2)]
    [InlineData("""{"id":"a","label":"late"}""", 1)]
    [InlineData("""{"id":"a","label":3}""", 3)]
    [InlineData("""{"id":"a","label":"3"}""", 3)]
    [InlineData("""{"id":"a","label":"l\u0061te"}""", 1)]
    public void TryParse_LabelNamingAClass_ReadsItsIndex(string json, int expected)
    {
        Assert.True(Parse(json, out var error), error);
        Assert.Equal(expected, _record.Label);
    }

    [Theory]
    [InlineData("""{"id":"a","label":"early"}""", "label 'early' names no class in Model:Classes (on-time, late, failed, 3)")]
    [InlineData("""{"id":"a","label":3.0}""", "label '3.0' names no class in Model:Classes (on-time, late, failed, 3)")]
    [InlineData("""{"id":"a","label":1}""", "label '1' names no class in Model:Classes (on-time, late, failed, 3)")]
    [InlineData("""{"id":"a","label":"Late"}""", "label 'Late' names no class in Model:Classes (on-time, late, failed, 3)")]
    [InlineData("""{"id":"a","label":["late"]}""", "label must name one of the classes in Model:Classes")]
    public void TryParse_LabelNamingNoClass_IsRefusedWithTheReason(string json, string reason)
    {
        Assert.False(Parse(json, out var error));
        Assert.Equal(reason, error);
    }

    [Fact]
    public void TryParse_NullLabel_IsAbsent()
    {
        Assert.True(Parse("""{"id":"a","features":{"x":1},"label":null}""", out var error), error);
        Assert.False(_record.HasLabel);
    }

    [Fact]
    public void TryParse_WithoutClasses_KeepsBinaryLabels()
    {
        var binary = new EventParser();
        Assert.False(binary.TryParse("""{"id":"a","label":"late"}"""u8, _record, out var error));
        Assert.Equal("label must be 0, 1, true or false", error);
    }

    [Fact]
    public void TryParse_ProbabilityObject_ReadsClassesInConfiguredOrder()
    {
        Assert.True(Parse("""{"id":"a","p":{"late":0.2,"3":0.1,"on-time":0.6,"failed":0.1000004},"label":"late"}""", out var error), error);
        Assert.Equal(RecordKind.Probability, _record.Kind);
        Assert.Equal([0.6, 0.2, 0.1000004, 0.1], _record.ClassProbabilities.ToArray());
        Assert.Equal(1, _record.Label);
    }

    [Theory]
    [InlineData("""{"id":"a","p":0.3}""", "p must be an object over the classes of Model:Classes (on-time, late, failed, 3), each a probability")]
    [InlineData("""{"id":"a","p":{"on-time":0.6,"late":0.2,"failed":0.2}}""", "p has no probability for class '3'")]
    [InlineData("""{"id":"a","p":{"on-time":0.6,"late":0.2,"failed":0.1,"3":0.2}}""", "p sums to 1.1 over the classes, not 1 (within 1e-6)")]
    [InlineData("""{"id":"a","p":{"on-time":0.6,"late":0.2,"early":0.1,"3":0.1}}""", "p names 'early', which is not a class in Model:Classes (on-time, late, failed, 3)")]
    [InlineData("""{"id":"a","p":{"on-time":0.6,"late":0.2,"late":0.1,"3":0.1}}""", "p names class 'late' twice")]
    [InlineData("""{"id":"a","p":{"on-time":1.5,"late":0.2,"failed":0.1,"3":0.1}}""", "p of class 'on-time' must be a finite number between 0 and 1")]
    public void TryParse_ProbabilityObjectThatDisagrees_IsRefusedWithTheReason(string json, string reason)
    {
        Assert.False(Parse(json, out var error));
        Assert.Equal(reason, error);
    }
}
