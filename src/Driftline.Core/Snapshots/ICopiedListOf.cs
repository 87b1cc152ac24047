namespace Driftline.Core.Snapshots;

/// <summary>How <see cref="CopiedListConverter{TList, TItem}"/> makes a <typeparamref name="TList"/> of a list it read.</summary>
internal interface ICopiedListOf<TList, TItem>
    where TList : CopiedList<TItem>
{
    /// <summary>The items of <paramref name="list"/>.</summary>
    static abstract TList Of(List<TItem> list);

    /// <summary>The snapshot property the items are written under, to name an item in an error.</summary>
    static abstract string JsonName { get; }
}
