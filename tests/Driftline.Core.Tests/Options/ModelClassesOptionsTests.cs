using Driftline.Core.Options;
using Xunit;

namespace Driftline.Core.Tests.Options;

/// <summary><c>Model:Classes</c> validation (issue 10).</summary>
public sealed class ModelClassesOptionsTests
{
    [Fact]
    public void Validate_NoClasses_IsBinary()
    {
        var options = new ModelOptions();
        Assert.Empty(options.Validate());
        Assert.False(options.IsMulticlass);
        Assert.Equal(2, options.ClassCount);
    }

    [Fact]
    public void Validate_ThreeClasses_IsMulticlass()
    {
        var options = new ModelOptions { Classes = ["on-time", "late", "failed"] };
        Assert.Empty(options.Validate());
        Assert.True(options.IsMulticlass);
        Assert.Equal(3, options.ClassCount);
    }

    [Fact]
    public void Validate_TwoClasses_NamesTheOptionAndTheFix()
    {
        var error = Assert.Single(new ModelOptions { Classes = ["late", "on-time"] }.Validate());
        Assert.Equal("Model:Classes", error.Option);
        Assert.Contains("at least 3", error.Problem, StringComparison.Ordinal);
        Assert.Contains("remove Classes for a binary model", error.Fix, StringComparison.Ordinal);
    }

    [Fact]
    public void Validate_EmptyAndRepeatedNames_AreNamedByPosition()
    {
        var errors = new ModelOptions { Classes = ["late", "", "failed", "late"] }.Validate().ToList();
        Assert.Equal(["Model:Classes:1", "Model:Classes:3"], errors.Select(e => e.Option));
        Assert.Equal("'late' is listed twice", errors[1].Problem);
    }
}
