namespace Driftline.Core.Options;

/// <summary>One configuration mistake: the option's path, what is wrong, and how to fix it.</summary>
/// <param name="Option">Configuration path, e.g. <c>Model:HashBits</c>.</param>
/// <param name="Problem">What is wrong with the value given.</param>
/// <param name="Fix">What to set instead.</param>
internal sealed record OptionError(string Option, string Problem, string Fix)
{
    /// <summary>
    /// Where the value came from, in the user's words (<c>config x.json</c>, <c>environment
    /// DRIFTLINE_Model__HashBits</c>); empty when the mistake has no one place (two variables
    /// that disagree); null when not known. Default null.
    /// </summary>
    public string? Source { get; init; }

    /// <summary>
    /// The whole sentence, for mistakes that read better as one (<c>unknown option
    /// Model:LearningRat; did you mean Model:LearningRate?</c>). Default null: built from the parts.
    /// </summary>
    public string? Message { get; init; }

    /// <inheritdoc />
    public override string ToString() => Message ?? $"{Option}: {Problem}. {Fix}";
}
