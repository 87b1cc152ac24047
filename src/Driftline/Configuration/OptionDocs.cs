using System.Reflection;
using System.Text;
using System.Text.RegularExpressions;
using System.Xml.Linq;

namespace Driftline.Configuration;

/// <summary>
/// The meaning of each option, read from the XML documentation the build writes beside each
/// assembly (the options classes' summaries), so <c>check --list</c> says what the code's own
/// documentation says and cannot drift from it. Where a file is missing, meanings are empty.
/// </summary>
internal static partial class OptionDocs
{
    private static readonly Dictionary<Assembly, Dictionary<string, string>> Loaded = [];
    private static readonly Lock Gate = new();

    /// <summary>The summary of <paramref name="property"/> as plain text, or "" when it has none.</summary>
    public static string Of(PropertyInfo property)
    {
        var type = property.DeclaringType!;
        Dictionary<string, string> members;
        lock (Gate)
        {
            if (!Loaded.TryGetValue(type.Assembly, out members!))
            {
                members = Read(type.Assembly);
                Loaded[type.Assembly] = members;
            }
        }
        return members.GetValueOrDefault($"P:{type.FullName}.{property.Name}", "");
    }

    private static Dictionary<string, string> Read(Assembly assembly)
    {
        var result = new Dictionary<string, string>(StringComparer.Ordinal);
        string file = Path.Combine(AppContext.BaseDirectory, assembly.GetName().Name + ".xml");
        if (!File.Exists(file))
        {
            return result;
        }
        try
        {
            foreach (var member in XDocument.Load(file).Descendants("member"))
            {
                if (member.Attribute("name")?.Value is { } name && member.Element("summary") is { } summary)
                {
                    result[name] = Plain(summary);
                }
            }
        }
        catch (System.Xml.XmlException)
        {
            // A damaged documentation file costs the meanings, not the command.
        }
        return result;
    }

    /// <summary>The text of a summary: references by their last name, code as written, one line.</summary>
    private static string Plain(XElement summary)
    {
        var text = new StringBuilder();
        foreach (var node in summary.DescendantNodes())
        {
            if (node is XText t && t.Parent is not null)
            {
                text.Append(t.Value);
            }
            else if (node is XElement { Name.LocalName: "see" or "seealso" or "paramref" or "typeparamref" } e && !e.Nodes().Any())
            {
                string? reference = e.Attribute("cref")?.Value ?? e.Attribute("langword")?.Value ?? e.Attribute("name")?.Value;
                if (reference is not null)
                {
                    int generic = reference.IndexOf('`', StringComparison.Ordinal);
                    reference = generic >= 0 ? reference[..generic] : reference;
                    text.Append(reference[(reference.LastIndexOf('.') + 1)..]);
                }
            }
        }
        return Spaces().Replace(text.ToString(), " ").Trim();
    }

    [GeneratedRegex(@"\s+")]
    private static partial Regex Spaces();
}
