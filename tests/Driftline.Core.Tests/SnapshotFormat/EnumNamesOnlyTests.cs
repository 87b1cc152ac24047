using System.Reflection;
using System.Text.Json.Serialization;
using Driftline.Core.Challengers;
using Driftline.Core.Snapshots;
using Xunit;

namespace Driftline.Core.Tests.SnapshotFormat;

public sealed class EnumNamesOnlyTests
{
    // A natively compiled build cannot make NamesOf<T> at run time, so every enum a snapshot can
    // hold must have its converter listed ahead of time (common practice for native AOT: no
    // generic instantiation that the compiler cannot see).
    [Fact]
    public void Known_CoversEveryEnumOfTheSnapshotTypes()
    {
        var enums = new HashSet<Type>();
        Walk(typeof(EngineSnapshot), enums, []);
        Walk(typeof(ChallengerPromotion), enums, []);
        Assert.NotEmpty(enums);
        var missing = enums.Where(e => !EnumNamesOnly.Known.ContainsKey(e)).Select(e => e.FullName).ToList();
        Assert.True(missing.Count == 0, "not in EnumNamesOnly.Known: " + string.Join(", ", missing));
    }

    [Fact]
    public void CreateConverter_KnownEnum_RoundTripsByName()
    {
        var options = new System.Text.Json.JsonSerializerOptions { Converters = { new EnumNamesOnly() } };
        string json = System.Text.Json.JsonSerializer.Serialize(Driftline.Core.Options.LearnerKind.AdaGrad, options);
        Assert.Equal("\"AdaGrad\"", json);
        Assert.Equal(Driftline.Core.Options.LearnerKind.AdaGrad, System.Text.Json.JsonSerializer.Deserialize<Driftline.Core.Options.LearnerKind>(json, options));
    }

    private static void Walk(Type type, HashSet<Type> enums, HashSet<Type> seen)
    {
        type = Nullable.GetUnderlyingType(type) ?? type;
        if (!seen.Add(type))
        {
            return;
        }
        if (type.IsEnum)
        {
            enums.Add(type);
            return;
        }
        if (type.IsArray)
        {
            Walk(type.GetElementType()!, enums, seen);
            return;
        }
        foreach (var argument in type.IsGenericType ? type.GetGenericArguments() : [])
        {
            Walk(argument, enums, seen);
        }
        if (type.Assembly != typeof(EngineSnapshot).Assembly)
        {
            return;
        }
        foreach (var property in type.GetProperties(BindingFlags.Public | BindingFlags.Instance))
        {
            if (property.GetCustomAttribute<JsonIgnoreAttribute>() is null && property.GetIndexParameters().Length == 0)
            {
                Walk(property.PropertyType, enums, seen);
            }
        }
    }
}
