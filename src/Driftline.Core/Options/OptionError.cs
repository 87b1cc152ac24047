namespace Driftline.Core.Options;

/// <summary>One configuration mistake: the option's path, what is wrong, and how to fix it.</summary>
/// <param name="Option">Configuration path, e.g. <c>Model:HashBits</c>.</param>
/// <param name="Problem">What is wrong with the value given.</param>
/// <param name="Fix">What to set instead.</param>
internal sealed record OptionError(string Option, string Problem, string Fix)
{
    /// <inheritdoc />
    public override string ToString() => $"{Option}: {Problem}. {Fix}";
}
