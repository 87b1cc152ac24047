using System.Collections;
using System.Diagnostics.CodeAnalysis;
using System.Globalization;
using System.Reflection;
using Driftline.Core.Options;
using Driftline.Kafka.Options;
using Microsoft.Extensions.Configuration;

namespace Driftline.Configuration;

/// <summary>
/// Every configuration key Driftline knows, and the check of a configuration against them
/// before it is bound: unknown keys (with the nearest known one), enums given by number or by
/// a name that is not one of theirs, and values of the wrong kind, each in the user's terms.
/// The binder's own errors speak of its types and settings; these speak of options.
/// </summary>
internal static class OptionSchema
{
    /// <summary>The root: the core's sections (<see cref="DriftlineOptions"/>) and the worker's (<c>Kafka</c>, <c>Worker</c>).</summary>
    public static readonly OptionNode Root = BuildRoot();

    /// <summary>The top-level section names.</summary>
    public static IEnumerable<string> Sections => Root.Children.Select(c => c.Name);

    /// <summary>Checks every key of <paramref name="configuration"/>; returns the mistakes, each with its source.</summary>
    public static IReadOnlyList<OptionError> Check(IConfiguration configuration, ConfigSources sources)
    {
        var errors = new List<OptionError>();
        foreach (var child in configuration.GetChildren())
        {
            Walk(child, Root, "", errors, sources);
        }
        return errors;
    }

    private static void Walk(IConfigurationSection section, OptionNode parent, string parentPath, List<OptionError> errors, ConfigSources sources)
    {
        string path = parentPath.Length == 0 ? section.Key : $"{parentPath}:{section.Key}";
        OptionNode? node = parent.Shape switch
        {
            OptionShape.Section => parent.Child(section.Key),
            OptionShape.List => int.TryParse(section.Key, NumberStyles.None, CultureInfo.InvariantCulture, out _) ? parent.Children[0] : null,
            _ => parent.Children[0],
        };
        if (node is null)
        {
            errors.Add(Unknown(section, parent, parentPath, sources));
            return;
        }
        // The path as the options spell it, with the user's list positions and map names.
        path = parent.Shape == OptionShape.Section ? (parentPath.Length == 0 ? node.Name : $"{parentPath}:{node.Name}") : path;
        var children = section.GetChildren().ToList();
        if (node.Shape == OptionShape.Value)
        {
            if (children.Count > 0)
            {
                errors.Add(Error(section, sources, path, $"{path} is a single value, not a section", "Give it one value"));
                return;
            }
            // A JSON null arrives as no value at all, which the binder turns into 0 or the first name.
            if (Describe(section.Value ?? "", node) is { } problem)
            {
                errors.Add(Error(section, sources, path, $"{path} {problem}", ""));
            }
            return;
        }
        if (children.Count == 0 && !string.IsNullOrEmpty(section.Value))
        {
            string kind = node.Shape == OptionShape.List ? "a list" : "a section";
            errors.Add(Error(section, sources, path, $"{path} is {kind}, not the single value '{section.Value}'", $"See `driftline check --list` for what goes in {path}"));
            return;
        }
        foreach (var child in children)
        {
            Walk(child, node, path, errors, sources);
        }
    }

    private static OptionError Unknown(IConfigurationSection section, OptionNode parent, string parentPath, ConfigSources sources)
    {
        string given = parentPath.Length == 0 ? section.Key : $"{parentPath}:{section.Key}";
        if (parent.Shape == OptionShape.List)
        {
            return Error(section, sources, given, $"{given} is not a list position", $"{parentPath} is a list: number its items 0, 1, 2…");
        }
        var guess = ClosestName.Find(section.Key, parent.Children.Select(c => c.Name));
        string hint = guess is null
            ? "see `driftline check --list` for every option"
            : $"did you mean {(parentPath.Length == 0 ? guess : $"{parentPath}:{guess}")}?";
        return Error(section, sources, given, $"unknown option {given}; {hint}", "");
    }

    private static OptionError Error(IConfigurationSection section, ConfigSources sources, string option, string message, string fix) =>
        new(option, message, fix) { Source = sources.Of(section.Path), Message = fix.Length == 0 ? message : $"{message}; {Lower(fix)}" };

    private static string Lower(string text) => text.Length > 0 && char.IsUpper(text[0]) && !text.StartsWith("See `", StringComparison.Ordinal) ? char.ToLowerInvariant(text[0]) + text[1..] : text;

    /// <summary>What is wrong with <paramref name="value"/> for <paramref name="node"/>, or null when it is fine.</summary>
    public static string? Describe(string value, OptionNode node)
    {
        var type = node.Type;
        if (type == typeof(string))
        {
            return null;
        }
        if (value.Trim().Length == 0)
        {
            return node.MayBeEmpty ? null : $"has no value; give {Kind(type)} or leave it out";
        }
        string shown = value.Length > 40 ? value[..40] + "…" : value;
        if (type.IsEnum)
        {
            // Names only: the binder would also take a number ("5") and any number, named or not.
            bool named = Enum.GetNames(type).Any(n => n.Equals(value.Trim(), StringComparison.OrdinalIgnoreCase));
            return named ? null : $"must be one of {string.Join(", ", Enum.GetNames(type))}, not '{shown}'";
        }
        bool ok = Type.GetTypeCode(type) switch
        {
            TypeCode.Boolean => bool.TryParse(value.Trim(), out _),
            TypeCode.Int32 => int.TryParse(value, NumberStyles.Integer, CultureInfo.InvariantCulture, out _),
            TypeCode.Int64 => long.TryParse(value, NumberStyles.Integer, CultureInfo.InvariantCulture, out _),
            TypeCode.Double => double.TryParse(value, NumberStyles.Float, CultureInfo.InvariantCulture, out _),
            _ when type == typeof(TimeSpan) => TimeSpan.TryParse(value.Trim(), CultureInfo.InvariantCulture, out _),
            _ => true,
        };
        return ok ? null : $"must be {Kind(type)}, not '{shown}'";
    }

    /// <summary>The kind of value a type takes, in plain words.</summary>
    public static string Kind(Type type) => type switch
    {
        _ when type == typeof(string) => "text",
        _ when type == typeof(bool) => "true or false",
        _ when type == typeof(int) || type == typeof(long) => "a whole number",
        _ when type == typeof(double) => "a number",
        _ when type == typeof(TimeSpan) => "a duration written [days.]hours:minutes:seconds, e.g. \"00:00:10\"",
        _ when type.IsEnum => "one of " + string.Join(", ", Enum.GetNames(type)),
        _ => "a value",
    };

    // The options types are walked by reflection. In a trimmed (native AOT) publish the csproj
    // makes the Driftline assemblies trimmer roots, so their public properties, constructors and
    // interfaces are all kept and these walks see what a plain build sees.
    private const string TrimmedMembers = "The options types' assemblies are trimmer roots in a trimmed publish (Driftline.csproj), so their members are kept.";

    private static OptionNode BuildRoot()
    {
        var core = new DriftlineOptions();
        var children = Properties(typeof(DriftlineOptions), core, "").ToList();
        children.Add(Build("Kafka", "Kafka", typeof(KafkaOptions), new KafkaOptions(), null));
        children.Add(Build("Worker", "Worker", typeof(WorkerOptions), new WorkerOptions(), null));
        return new OptionNode { Name = "", Path = "", Shape = OptionShape.Section, Type = typeof(object), Children = children };
    }

    [UnconditionalSuppressMessage("Trimming", "IL2070", Justification = TrimmedMembers)]
    private static IEnumerable<OptionNode> Properties(Type type, object? instance, string path) =>
        type.GetProperties(BindingFlags.Public | BindingFlags.Instance)
            .Where(p => p.SetMethod is { IsPublic: true } && p.GetIndexParameters().Length == 0)
            .Select(p => Build(p.Name, path.Length == 0 ? p.Name : $"{path}:{p.Name}", p.PropertyType, instance is null ? null : p.GetValue(instance), p));

    [UnconditionalSuppressMessage("Trimming", "IL2062", Justification = TrimmedMembers)]
    [UnconditionalSuppressMessage("Trimming", "IL2065", Justification = TrimmedMembers)]
    [UnconditionalSuppressMessage("Trimming", "IL2072", Justification = TrimmedMembers)]
    [UnconditionalSuppressMessage("Trimming", "IL2075", Justification = TrimmedMembers)]
    private static OptionNode Build(string name, string path, Type type, object? value, PropertyInfo? property)
    {
        var underlying = Nullable.GetUnderlyingType(type);
        if (underlying is not null || IsValue(type))
        {
            return new OptionNode
            {
                Name = name, Path = path, Shape = OptionShape.Value, Type = underlying ?? type,
                MayBeEmpty = underlying is not null || type == typeof(string), Property = property, Default = value,
            };
        }
        if (Interface(type, typeof(IDictionary<,>)) is { } dictionary)
        {
            var entry = Build("<name>", path + ":<name>", dictionary.GetGenericArguments()[1], null, null);
            return new OptionNode { Name = name, Path = path, Shape = OptionShape.Map, Type = type, Property = property, Default = value, Children = [entry] };
        }
        if ((type.IsArray ? type.GetElementType() : Interface(type, typeof(IEnumerable<>))?.GetGenericArguments()[0]) is { } itemType)
        {
            var item = Build("<n>", path + ":<n>", itemType, IsValue(itemType) || itemType.IsAbstract || itemType.GetConstructor(Type.EmptyTypes) is null ? null : Activator.CreateInstance(itemType), null);
            return new OptionNode { Name = name, Path = path, Shape = OptionShape.List, Type = type, Property = property, Default = value, Children = [item] };
        }
        if (typeof(IEnumerable).IsAssignableFrom(type))
        {
            // A collection the binder may fill in its own way: take any entries, check none.
            var any = new OptionNode { Name = "<name>", Path = path + ":<name>", Shape = OptionShape.Value, Type = typeof(string), MayBeEmpty = true };
            return new OptionNode { Name = name, Path = path, Shape = OptionShape.Map, Type = type, Property = property, Default = value, Children = [any] };
        }
        return new OptionNode
        {
            Name = name, Path = path, Shape = OptionShape.Section, Type = type, Property = property, Default = value,
            Children = Properties(type, value, path).ToList(),
        };
    }

    /// <summary>One value, as the binder sees it: anything its type converter reads from text (numbers, enums, TimeSpan, Uri…).</summary>
    [UnconditionalSuppressMessage("Trimming", "IL2026", Justification = TrimmedMembers)]
    [UnconditionalSuppressMessage("Trimming", "IL2067", Justification = TrimmedMembers)]
    private static bool IsValue(Type type) =>
        type.IsPrimitive || type.IsEnum || type == typeof(string) || type == typeof(TimeSpan) || type == typeof(decimal)
        || (!typeof(IEnumerable).IsAssignableFrom(type) && System.ComponentModel.TypeDescriptor.GetConverter(type).CanConvertFrom(typeof(string)));

    [UnconditionalSuppressMessage("Trimming", "IL2070", Justification = TrimmedMembers)]
    private static Type? Interface(Type type, Type generic) =>
        type.IsGenericType && type.GetGenericTypeDefinition() == generic ? type
            : type.GetInterfaces().FirstOrDefault(i => i.IsGenericType && i.GetGenericTypeDefinition() == generic);
}
