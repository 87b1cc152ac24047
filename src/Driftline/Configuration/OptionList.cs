using System.Collections;
using System.Globalization;

namespace Driftline.Configuration;

/// <summary>
/// <c>driftline check --list</c>: every option with its kind, built-in value and meaning, in
/// the order of the options classes. The configuration messages point here.
/// </summary>
internal static class OptionList
{
    /// <summary>Writes every option under <see cref="OptionSchema.Root"/>.</summary>
    public static void Write(TextWriter o)
    {
        o.WriteLine("Every option, as a JSON path (sections joined by ':'; in an environment variable, DRIFTLINE_ then the path with '__', e.g. DRIFTLINE_Model__HashBits=20).");
        foreach (var section in OptionSchema.Root.Children)
        {
            o.WriteLine();
            Write(o, section);
        }
    }

    private static void Write(TextWriter o, OptionNode node)
    {
        switch (node.Shape)
        {
            case OptionShape.Section:
                foreach (var child in node.Children)
                {
                    Write(o, child);
                }
                break;
            case OptionShape.List when node.Children[0].Shape == OptionShape.Section:
                Line(o, node.Path, "a list of the items below", node.Default is null ? "none given: the built-in set (see `driftline check`)" : Shown(node.Default), node);
                Write(o, node.Children[0]);
                break;
            case OptionShape.List:
                Line(o, node.Path, $"a list of {OptionSchema.Kind(node.Children[0].Type)}", Shown(node.Default), node);
                break;
            case OptionShape.Map:
                Line(o, node.Children[0].Path, $"{OptionSchema.Kind(node.Children[0].Type)} per name", Shown(node.Default), node);
                break;
            default:
                Line(o, node.Path, OptionSchema.Kind(node.Type), Shown(node.Default), node);
                break;
        }
    }

    private static void Line(TextWriter o, string path, string kind, string shown, OptionNode node)
    {
        o.WriteLine($"{path} = {shown}  ({kind})");
        string meaning = node.Property is null ? "" : OptionDocs.Of(node.Property);
        if (meaning.Length > 0)
        {
            o.WriteLine($"    {meaning}");
        }
    }

    /// <summary>A built-in value as it would be written in the file.</summary>
    public static string Shown(object? value) => value switch
    {
        null => "none",
        string s => $"\"{s}\"",
        bool b => b ? "true" : "false",
        TimeSpan t => $"\"{t.ToString("c", CultureInfo.InvariantCulture)}\"",
        IDictionary { Count: 0 } => "{}",
        IDictionary d => "{ " + string.Join(", ", d.Keys.Cast<object>().Select(k => $"\"{k}\": {Shown(d[k])}")) + " }",
        IList { Count: 0 } => "[]",
        IList l => "[ " + string.Join(", ", l.Cast<object>().Select(Shown)) + " ]",
        IFormattable f => f.ToString(null, CultureInfo.InvariantCulture),
        _ => value.ToString() ?? "",
    };
}
