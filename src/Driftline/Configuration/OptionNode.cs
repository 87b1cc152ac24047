using System.Reflection;

namespace Driftline.Configuration;

/// <summary>
/// One known configuration key, read off the options classes by reflection so that an option
/// added to a class is known here (to the typo check and to <c>check --list</c>) with no second list.
/// </summary>
internal sealed class OptionNode
{
    /// <summary>The key's own name as the options class spells it; <c>&lt;n&gt;</c> for a list item, <c>&lt;name&gt;</c> for a map entry.</summary>
    public required string Name { get; init; }

    /// <summary>The full path with the class's spelling, e.g. <c>Alerts:&lt;n&gt;:Metric</c>.</summary>
    public required string Path { get; init; }

    /// <summary>What the key holds.</summary>
    public required OptionShape Shape { get; init; }

    /// <summary>The value's type (for <see cref="OptionShape.Value"/>, with <see cref="Nullable{T}"/> removed).</summary>
    public required Type Type { get; init; }

    /// <summary>True when the value may be left empty (a nullable value or a string).</summary>
    public bool MayBeEmpty { get; init; }

    /// <summary>The property bound to the key; null for list items and map entries.</summary>
    public PropertyInfo? Property { get; init; }

    /// <summary>The built-in value, for <c>check --list</c>.</summary>
    public object? Default { get; init; }

    /// <summary>Options below a section; for a list or map, the one node every item follows.</summary>
    public IReadOnlyList<OptionNode> Children { get; init; } = [];

    /// <summary>The child named <paramref name="name"/> (configuration keys ignore case), or null.</summary>
    public OptionNode? Child(string name) =>
        Children.FirstOrDefault(c => c.Name.Equals(name, StringComparison.OrdinalIgnoreCase));
}
