namespace Driftline.Configuration;

/// <summary>What a configuration key holds.</summary>
internal enum OptionShape
{
    /// <summary>Named options below it (<c>Model</c>).</summary>
    Section,

    /// <summary>One value (<c>Model:HashBits</c>).</summary>
    Value,

    /// <summary>A list: children keyed 0, 1, 2… (<c>Alerts</c>, <c>Model:Interactions</c>).</summary>
    List,

    /// <summary>Entries named by the user (<c>Model:FixedScales</c>, <c>Kafka:Client</c>).</summary>
    Map,
}
